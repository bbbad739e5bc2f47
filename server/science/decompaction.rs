//! Decompaction: moving a unit to a new burial depth while conserving its grain
//! (solid) volume, with the exponential porosity law (docs/science.md 2).
//!
//! Depths here are below the sediment surface (the depositional surface), positive
//! down, in metres: `0 <= top <= base`. These functions run about N^2 times per well
//! of N surfaces, so they use closed forms and at most one exponential per Newton step.

use super::ScienceError;
use super::lithology::Lithology;
use super::tolerance::DEPTH_SOLVE_M;

/// Newton from the upper bound converges in 4-5 steps (docs/science.md 2.3); bisection
/// fallback steps halve the bracket, so this many cannot fail for finite inputs.
const MAX_SOLVE_STEPS: usize = 200;

/// Solid (grain) thickness of a unit between `top_m` and `base_m` below the sediment
/// surface (m):
/// `Hs = (base - top) - (phi0/c)(exp(-c top) - exp(-c base))`, and
/// `Hs = (base - top)(1 - phi0)` when c = 0.
///
/// Assumes no grain compression or cementation (SC80; Allen & Allen; docs/science.md 2.1).
/// The pore term is evaluated with `exp_m1` so thin units and small c keep full precision.
pub fn solid_thickness(lithology: &Lithology, top_m: f64, base_m: f64) -> f64 {
    (base_m - top_m) - pore_thickness(lithology, top_m, base_m)
}

/// Pore-water thickness `Hw = (phi0/c)(exp(-c top) - exp(-c base))` (docs/science.md 2.1).
fn pore_thickness(lithology: &Lithology, top_m: f64, base_m: f64) -> f64 {
    let c = lithology.compaction_per_m();
    let thickness = base_m - top_m;
    if c == 0.0 {
        return lithology.surface_porosity * thickness;
    }
    // (phi(top)/c) (1 - exp(-c T)), which avoids cancelling two nearby exponentials.
    -lithology.porosity_at(top_m) / c * (-c * thickness).exp_m1()
}

/// Thickness (m) of a unit of solid thickness `solid_m` whose top is moved to `new_top_m`
/// below the sediment surface: the root T of the general decompaction equation
/// `T = Hs + (phi(top)/c)(1 - exp(-c T))` (Allen & Allen; docs/science.md 2.1, 2.2).
///
/// Solved by Newton's method from the upper bound `Hs / (1 - phi(top))`. The function
/// `f(T) = T - (phi(top)/c)(1 - exp(-c T)) - Hs` is increasing and convex, so Newton from
/// the right never overshoots; a bisection step on the bracket `[Hs, upper bound]` guards
/// against rounding all the same. Converged to [`DEPTH_SOLVE_M`] (1e-6 m, as
/// docs/science.md 2.2 asks). Exact special cases: phi0 = 0 gives `Hs`; c = 0 gives
/// `Hs / (1 - phi0)`.
///
/// Errors: [`ScienceError::OutOfRange`] for a negative or non-finite top or solid thickness;
/// [`ScienceError::NoConvergence`] if the solve fails (not expected for valid inputs).
pub fn decompacted_thickness(
    lithology: &Lithology,
    new_top_m: f64,
    solid_m: f64,
) -> Result<f64, ScienceError> {
    decompacted_thickness_from(lithology, new_top_m, solid_m, f64::INFINITY)
}

/// [`decompacted_thickness`] with the Newton solve started from `start_m` when that is
/// below the general upper bound: a backstrip passes the unit's thickness at its previous,
/// shallower position, which is already close (burial only thins a unit). A start on the
/// wrong side of the root costs one extra step and no accuracy: the bracket keeps the solve
/// safe. Same formula, assumptions, errors and reference (docs/science.md 2.2).
pub fn decompacted_thickness_from(
    lithology: &Lithology,
    new_top_m: f64,
    solid_m: f64,
    start_m: f64,
) -> Result<f64, ScienceError> {
    if !(new_top_m.is_finite() && new_top_m >= 0.0) {
        return Err(ScienceError::OutOfRange {
            name: "decompaction top depth",
            value: new_top_m,
            range: "0 m or deeper below the sediment surface",
        });
    }
    if !(solid_m.is_finite() && solid_m >= 0.0) {
        return Err(ScienceError::OutOfRange {
            name: "solid thickness",
            value: solid_m,
            range: "0 m or more",
        });
    }
    let c = lithology.compaction_per_m();
    if solid_m == 0.0 || lithology.surface_porosity == 0.0 {
        return Ok(solid_m);
    }
    if c == 0.0 {
        return Ok(solid_m / (1.0 - lithology.surface_porosity));
    }
    let phi_top = lithology.porosity_at(new_top_m);
    let pore_scale = phi_top / c;
    let inverse_solid_fraction = 1.0 / (1.0 - phi_top);
    let (mut low, mut high) = (solid_m, solid_m * inverse_solid_fraction);
    let mut thickness = if start_m >= low {
        start_m.min(high)
    } else {
        high
    };
    // After a Newton step of length d the error is at most K d^2, with
    // K = max f'' / (2 min f') <= c phi(top) / (2 (1 - phi(top))); this saves the
    // confirming step a plain |d| test would take.
    let curvature = 0.5 * c * phi_top * inverse_solid_fraction;
    for _ in 0..MAX_SOLVE_STEPS {
        let decay = (-c * thickness).exp();
        let f = thickness + pore_scale * (decay - 1.0) - solid_m;
        if f == 0.0 {
            return Ok(thickness);
        }
        if f > 0.0 {
            high = thickness;
        } else {
            low = thickness;
        }
        let slope = 1.0 - phi_top * decay;
        let newton = thickness - f / slope;
        let step = (newton - thickness).abs();
        if newton >= low && newton <= high {
            thickness = newton;
            if step < DEPTH_SOLVE_M || curvature * step * step < DEPTH_SOLVE_M {
                return Ok(thickness);
            }
        } else {
            thickness = 0.5 * (low + high);
            if high - low < DEPTH_SOLVE_M {
                return Ok(thickness);
            }
        }
    }
    Err(ScienceError::NoConvergence {
        what: "decompaction of a unit",
    })
}

/// Base depth (m) of a unit of solid thickness `solid_m` restored with its top at
/// `new_top_m` below the sediment surface: `new_top_m +` [`decompacted_thickness`]
/// (docs/science.md 2.2). Same method, assumptions and errors.
pub fn decompacted_base(
    lithology: &Lithology,
    new_top_m: f64,
    solid_m: f64,
) -> Result<f64, ScienceError> {
    Ok(new_top_m + decompacted_thickness(lithology, new_top_m, solid_m)?)
}

/// Mean porosity of a unit between `top_m` and `base_m` below the sediment surface,
/// `phibar = Hw / (base - top)` (docs/science.md 2.1); the porosity at the top for a unit of
/// zero thickness (the limit).
pub fn mean_porosity(lithology: &Lithology, top_m: f64, base_m: f64) -> f64 {
    let thickness = base_m - top_m;
    if thickness > 0.0 {
        pore_thickness(lithology, top_m, base_m) / thickness
    } else {
        lithology.porosity_at(top_m)
    }
}

/// Bulk density (kg m^-3) of a fluid-saturated unit of mean porosity `mean_porosity`:
/// `rho = phibar rho_p + (1 - phibar) rho_g` (docs/science.md 2.4), with the pore fluid
/// density `rho_p` (normally the water density of the model parameters).
pub fn layer_density(
    lithology: &Lithology,
    mean_porosity: f64,
    pore_fluid_density_kg_m3: f64,
) -> f64 {
    mean_porosity * pore_fluid_density_kg_m3 + (1.0 - mean_porosity) * lithology.grain_density_kg_m3
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::lithology::Catalogue;
    use crate::tolerance::{assert_printed, assert_relative};
    use proptest::prelude::*;

    fn lith(name: &str) -> Lithology {
        Catalogue::published_defaults().get(name).unwrap().clone()
    }

    /// docs/science.md 2.3 rows: (lithology, Hs, decompacted thickness, mean phi before, after).
    /// Computed from the Sclater & Christie (1980) parameters of docs/science.md 1.2.
    const WORKED: [(&str, f64, f64, f64, f64); 4] = [
        ("shale", 822.044, 1475.197, 0.1780, 0.4428),
        ("sandstone", 749.755, 1280.079, 0.2502, 0.4143),
        ("chalk", 878.854, 1532.696, 0.1211, 0.4266),
        ("shaly sandstone", 787.431, 1387.504, 0.2126, 0.4325),
    ];

    #[test]
    fn a_layer_moved_from_2000_m_to_the_surface_matches_the_worked_examples() {
        for (name, hs, thickness, phi_before, phi_after) in WORKED {
            let l = lith(name);
            let solid = solid_thickness(&l, 2000.0, 3000.0);
            // docs/science.md 2.3, S&C (1980) parameters: solid thickness of 2000-3000 m.
            assert_printed(solid, hs, 3, &format!("{name} Hs"));
            let base = decompacted_base(&l, 0.0, solid).unwrap();
            // docs/science.md 2.3: decompacted thickness at the surface.
            assert_printed(base, thickness, 3, &format!("{name} decompacted thickness"));
            assert_printed(
                mean_porosity(&l, 2000.0, 3000.0),
                phi_before,
                4,
                &format!("{name} mean porosity at 2000-3000 m"),
            );
            assert_printed(
                mean_porosity(&l, 0.0, base),
                phi_after,
                4,
                &format!("{name} mean porosity at the surface"),
            );
        }
    }

    #[test]
    fn the_unresolved_shaly_sandstone_coefficient_gives_the_other_check_value() {
        // docs/science.md 2.3 last row: c = 1/2464 m (Wangen's printed z0), Hs 795.579 m,
        // decompacted 1390.712 m.
        let l =
            Lithology::new("shaly sandstone (z0 2464 m)", 0.56, 1000.0 / 2464.0, 2680.0).unwrap();
        let solid = solid_thickness(&l, 2000.0, 3000.0);
        assert_printed(solid, 795.579, 3, "Hs with z0 = 2464 m");
        assert_printed(
            decompacted_base(&l, 0.0, solid).unwrap(),
            1390.712,
            3,
            "decompacted thickness with z0 = 2464 m",
        );
    }

    #[test]
    fn the_shale_layer_moved_to_a_500_m_top() {
        // docs/science.md 2.3 further check: base 1781.291 m, thickness 1281.291 m.
        let l = lith("shale");
        let solid = solid_thickness(&l, 2000.0, 3000.0);
        assert_printed(
            decompacted_base(&l, 500.0, solid).unwrap(),
            1781.291,
            3,
            "base",
        );
        assert_printed(
            decompacted_thickness(&l, 500.0, solid).unwrap(),
            1281.291,
            3,
            "thickness",
        );
    }

    #[test]
    fn a_mixed_layer_by_averaged_parameters() {
        // docs/science.md 1.4 method (a): 60 % shale / 40 % sandstone at 2000-3000 m moved to
        // the surface: 1406.66 m.
        let catalogue = Catalogue::published_defaults();
        let mix = crate::LithologyMix {
            parts: vec![
                crate::column::MixPart {
                    lithology: "shale".into(),
                    fraction: 0.6,
                },
                crate::column::MixPart {
                    lithology: "sandstone".into(),
                    fraction: 0.4,
                },
            ],
        };
        let l = catalogue.resolve(&mix).unwrap();
        let solid = solid_thickness(&l, 2000.0, 3000.0);
        assert_printed(decompacted_base(&l, 0.0, solid).unwrap(), 1406.66, 2, "mix");
    }

    #[test]
    fn bulk_density_weights_grains_and_pore_water() {
        // docs/science.md 2.4: a unit with no pores has its grain density (salt: 2160 [memory],
        // docs/science.md 1.3); one that were all pore would have the fluid's density.
        let shale = lith("shale");
        assert_eq!(layer_density(&lith("salt"), 0.0, 1000.0), 2160.0);
        assert_relative(
            layer_density(&shale, 1.0, 1030.0),
            1030.0,
            1e-15,
            "all pore",
        );
        // Mass balance: density times thickness is grain mass plus pore-water mass.
        let (top, base) = (2000.0, 3000.0);
        let solid = solid_thickness(&shale, top, base);
        let rho = layer_density(&shale, mean_porosity(&shale, top, base), 1000.0);
        let mass = 2720.0 * solid + 1000.0 * (base - top - solid);
        assert_relative(rho * (base - top), mass, 1e-12, "shale mass per unit area");
    }

    #[test]
    fn special_cases_are_exact() {
        // docs/science.md 2.2: phi0 = 0 keeps the thickness; c = 0 gives Hs / (1 - phi0).
        let salt = lith("salt");
        assert_eq!(solid_thickness(&salt, 1234.5, 1734.5), 500.0);
        assert_eq!(decompacted_base(&salt, 10.0, 500.0).unwrap(), 510.0);
        let constant = Lithology::new("constant porosity", 0.25, 0.0, 2650.0).unwrap();
        assert_eq!(solid_thickness(&constant, 800.0, 1200.0), 300.0);
        assert_eq!(decompacted_thickness(&constant, 0.0, 300.0).unwrap(), 400.0);
        assert_eq!(
            decompacted_thickness(&lith("shale"), 100.0, 0.0).unwrap(),
            0.0
        );
    }

    #[test]
    fn bad_inputs_are_refused() {
        let l = lith("shale");
        assert!(decompacted_base(&l, -1.0, 100.0).is_err());
        assert!(decompacted_base(&l, 0.0, -1.0).is_err());
        assert!(decompacted_base(&l, f64::NAN, 1.0).is_err());
    }

    /// Independent cross-check of the Newton root: the solid thickness is integrated
    /// numerically from the porosity law by double-exponential quadrature (the
    /// `quadrature` crate, not the closed form), and the base is found by bisection on
    /// that integral, a different root method from the Newton solve.
    #[test]
    fn the_newton_root_agrees_with_quadrature_and_bisection() {
        let solid_by_quadrature = |l: &Lithology, top: f64, base: f64| {
            quadrature::double_exponential::integrate(
                |z| 1.0 - l.surface_porosity * (-l.compaction_per_km * 1e-3 * z).exp(),
                top,
                base,
                1e-10,
            )
            .integral
        };
        for (name, ..) in WORKED {
            let l = lith(name);
            for (top, base, new_top) in [(2000.0, 3000.0, 0.0), (1500.0, 1600.0, 300.0)] {
                let solid = solid_by_quadrature(&l, top, base);
                let (mut low, mut high) = (new_top, new_top + 10.0 * (base - top));
                for _ in 0..200 {
                    let mid = 0.5 * (low + high);
                    if solid_by_quadrature(&l, new_top, mid) < solid {
                        low = mid;
                    } else {
                        high = mid;
                    }
                }
                let newton = decompacted_base(&l, new_top, solid_thickness(&l, top, base)).unwrap();
                assert!(
                    (newton - 0.5 * (low + high)).abs() < 1e-6,
                    "{name} {top}-{base} to {new_top}: Newton {newton}, quadrature {low}"
                );
            }
        }
    }

    fn any_lithology() -> impl Strategy<Value = Lithology> {
        (0.0..0.9f64, 0.0..2.0f64, 1000.0..4000.0f64)
            .prop_map(|(phi0, c, rho)| Lithology::new("any", phi0, c, rho).unwrap())
    }

    proptest! {
        #[test]
        fn decompaction_conserves_the_solid_thickness(
            l in any_lithology(),
            top in 0.0..8000.0f64,
            thickness in 0.0..3000.0f64,
            new_top in 0.0..8000.0f64,
        ) {
            let solid = solid_thickness(&l, top, top + thickness);
            let new_base = decompacted_base(&l, new_top, solid).unwrap();
            // Property of docs/science.md 2.1: solid thickness is the same at both positions.
            prop_assert!((solid_thickness(&l, new_top, new_base) - solid).abs() < 1e-6);
            // Shallower means thicker, deeper means thinner (porosity falls with depth).
            let new_thickness = new_base - new_top;
            if new_top <= top {
                prop_assert!(new_thickness >= thickness - 1e-6);
            } else {
                prop_assert!(new_thickness <= thickness + 1e-6);
            }
        }

        #[test]
        fn any_start_gives_the_same_root(
            l in any_lithology(),
            top in 0.0..8000.0f64,
            solid in 0.0..3000.0f64,
            start in 0.0..10000.0f64,
        ) {
            let cold = decompacted_thickness(&l, top, solid).unwrap();
            let warm = decompacted_thickness_from(&l, top, solid, start).unwrap();
            // Both solves stop within the solve tolerance of the root.
            prop_assert!((cold - warm).abs() < 2.0 * DEPTH_SOLVE_M, "cold {cold}, warm {warm}");
        }

        #[test]
        fn non_compacting_and_constant_porosity_units_are_exact(
            phi0 in 0.0..0.9f64,
            top in 0.0..8000.0f64,
            solid in 0.0..3000.0f64,
        ) {
            // docs/science.md 2.2 special cases, exact in floating point.
            let none = Lithology::new("phi0 = 0", 0.0, 0.5, 2200.0).unwrap();
            prop_assert_eq!(decompacted_thickness(&none, top, solid).unwrap(), solid);
            let constant = Lithology::new("c = 0", phi0, 0.0, 2650.0).unwrap();
            prop_assert_eq!(decompacted_thickness(&constant, top, solid).unwrap(), solid / (1.0 - phi0));
        }
    }
}
