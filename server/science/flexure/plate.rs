//! The elastic plate: flexural rigidity, the flexural parameter, and the closed-form
//! deflections of a thin elastic plate floating on a fluid mantle
//! (docs/science-flexure.md 1, 2; Turcotte & Schubert ch. 3; Watts, *Isostasy and Flexure*).
//!
//! Deflection `w` is positive downward (as subsidence is). Loads are per unit length along
//! strike: a line load `V0` in N m^-1, a distributed load `q` in Pa. The restoring force
//! is `(rho_m - rho_infill) g w`; for backstripping the infill is water.

use crate::{GRAVITY_M_S2, ScienceError};
use serde::{Deserialize, Serialize};

/// Young's modulus, Poisson's ratio and elastic thickness of the plate.
///
/// Defaults: E = 70 GPa and nu = 0.25, the textbook values of Turcotte & Schubert
/// (docs/science-flexure.md 1; E = 70 GPa from memory of TS, E = 100 GPa and nu = 0.25 are
/// used in a published table; both are in the check table), Te = 20 km (a middle
/// value of continental plates; a reviewed choice of the section, common practice).
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(default)]
pub struct ElasticPlate {
    pub young_modulus_pa: f64,
    pub poisson_ratio: f64,
    /// Effective elastic thickness Te (m). 0 is local (Airy) compensation.
    pub elastic_thickness_m: f64,
}

impl Default for ElasticPlate {
    fn default() -> Self {
        ElasticPlate {
            young_modulus_pa: 70e9,
            poisson_ratio: 0.25,
            elastic_thickness_m: 20_000.0,
        }
    }
}

/// Largest elastic thickness accepted (m): thicker than any plate reported on Earth
/// (Watts, *Isostasy and Flexure*, reports Te up to about 100-130 km; memory), so it only
/// catches a unit mistake (Te given in metres where km were meant, or the reverse).
pub const MAX_ELASTIC_THICKNESS_M: f64 = 200_000.0;

impl ElasticPlate {
    /// The same plate with another elastic thickness.
    pub fn with_thickness(self, elastic_thickness_m: f64) -> Self {
        ElasticPlate {
            elastic_thickness_m,
            ..self
        }
    }

    /// Check the plate: E 1 to 300 GPa, nu 0 to 0.5, Te 0 to [`MAX_ELASTIC_THICKNESS_M`].
    pub fn validate(&self) -> Result<(), ScienceError> {
        let check = |name, value: f64, lo, hi, range| {
            if value.is_finite() && value >= lo && value <= hi {
                Ok(())
            } else {
                Err(ScienceError::OutOfRange { name, value, range })
            }
        };
        check(
            "young_modulus_pa",
            self.young_modulus_pa,
            1e9,
            300e9,
            "1e9 to 3e11 Pa",
        )?;
        check(
            "poisson_ratio",
            self.poisson_ratio,
            0.0,
            0.499,
            "0 to 0.499",
        )?;
        check(
            "elastic_thickness_m",
            self.elastic_thickness_m,
            0.0,
            MAX_ELASTIC_THICKNESS_M,
            "0 to 200000 m",
        )
    }

    /// Flexural rigidity `D = E Te^3 / (12 (1 - nu^2))` (N m); docs/science-flexure.md 1,
    /// Turcotte & Schubert eq. 3-72. 6.2222e21 N m for E = 70 GPa, nu = 0.25, Te = 10 km.
    pub fn rigidity_n_m(&self) -> f64 {
        flexural_rigidity(
            self.young_modulus_pa,
            self.poisson_ratio,
            self.elastic_thickness_m,
        )
    }

    /// Flexural parameter alpha (m) for a density contrast `density_contrast_kg_m3`
    /// (mantle minus infill); see [`flexural_parameter`].
    pub fn flexural_parameter_m(&self, density_contrast_kg_m3: f64) -> f64 {
        flexural_parameter(self.rigidity_n_m(), density_contrast_kg_m3)
    }
}

/// Flexural rigidity `D = E Te^3 / (12 (1 - nu^2))` (N m) from Young's modulus E (Pa),
/// Poisson's ratio nu and elastic thickness Te (m) (Turcotte & Schubert eq. 3-72;
/// docs/science-flexure.md 1).
pub fn flexural_rigidity(young_modulus_pa: f64, poisson_ratio: f64, thickness_m: f64) -> f64 {
    young_modulus_pa * thickness_m.powi(3) / (12.0 * (1.0 - poisson_ratio * poisson_ratio))
}

/// Flexural parameter `alpha = [4 D / (drho g)]^(1/4)` (m), D in N m, drho the density
/// contrast between mantle and infill (kg m^-3), g = 9.81 (Turcotte & Schubert eq. 3-127;
/// docs/science-flexure.md 1). 0 for D = 0 (local compensation).
pub fn flexural_parameter(rigidity_n_m: f64, density_contrast_kg_m3: f64) -> f64 {
    (4.0 * rigidity_n_m / (density_contrast_kg_m3 * GRAVITY_M_S2)).powf(0.25)
}

/// The rigidity back from alpha: `D = drho g alpha^4 / 4` (N m).
pub fn rigidity_from_parameter(alpha_m: f64, density_contrast_kg_m3: f64) -> f64 {
    density_contrast_kg_m3 * GRAVITY_M_S2 * alpha_m.powi(4) / 4.0
}

/// Elastic thickness (m) of a plate of rigidity D: `Te = [12 (1 - nu^2) D / E]^(1/3)`.
pub fn elastic_thickness_from_rigidity(
    rigidity_n_m: f64,
    young_modulus_pa: f64,
    poisson_ratio: f64,
) -> f64 {
    (12.0 * (1.0 - poisson_ratio * poisson_ratio) * rigidity_n_m / young_modulus_pa).cbrt()
}

/// Peak deflection under a line load V0 (N m^-1) on a continuous plate,
/// `w0 = V0 alpha^3 / (8 D)` (m); docs/science-flexure.md 2, Turcotte & Schubert eq. 3-128.
pub fn continuous_line_load_peak_m(line_load_n_m: f64, rigidity_n_m: f64, alpha_m: f64) -> f64 {
    line_load_n_m * alpha_m.powi(3) / (8.0 * rigidity_n_m)
}

/// Deflection (m, down positive) at distance `x_m` from a line load on a continuous plate:
/// `w = w0 exp(-|x|/alpha) [cos(|x|/alpha) + sin(|x|/alpha)]` (Turcotte & Schubert
/// eq. 3-129; docs/science-flexure.md 2). Zero at `|x| = 3 pi alpha / 4`, the forebulge
/// crest at `|x| = pi alpha` with `w = -w0 exp(-pi)`.
pub fn continuous_line_load_deflection(x_m: f64, peak_m: f64, alpha_m: f64) -> f64 {
    let s = x_m.abs() / alpha_m;
    peak_m * (-s).exp() * (s.cos() + s.sin())
}

/// Peak deflection of a broken plate under a line load V0 (N m^-1) standing on the break,
/// `w0 = V0 alpha^3 / (4 D)` (m); docs/science-flexure.md 2, Turcotte & Schubert eq. 3-134.
/// In that setting each of the two free ends carries V0/2; the whole of V0 on one free end
/// bends it twice as far (Hetényi 1946, the semi-infinite beam: `y0 = 2 P lambda / k`).
pub fn broken_line_load_peak_m(line_load_n_m: f64, rigidity_n_m: f64, alpha_m: f64) -> f64 {
    line_load_n_m * alpha_m.powi(3) / (4.0 * rigidity_n_m)
}

/// Deflection (m) at distance `x_m >= 0` from the loaded break of a broken plate:
/// `w = w0 exp(-x/alpha) cos(x/alpha)` (Turcotte & Schubert eq. 3-135;
/// docs/science-flexure.md 2). Zero at `x = pi alpha / 2`, the forebulge crest at
/// `x = 3 pi alpha / 4`.
pub fn broken_line_load_deflection(x_m: f64, peak_m: f64, alpha_m: f64) -> f64 {
    let s = x_m / alpha_m;
    peak_m * (-s).exp() * s.cos()
}

/// Deflection (m) at `x_m` of a continuous plate under a uniform strip load centred on 0,
/// of half-width `half_width_m`, whose local (Airy) deflection is `local_m = q/(drho g)`:
/// inside, `w = local [1 - (e^-A cos A + e^-B cos B)/2]`, outside,
/// `w = local (e^-A' cos A' - e^-B cos B)/2`, with `A = (a - |x|)/alpha`,
/// `A' = (|x| - a)/alpha`, `B = (a + |x|)/alpha` (the line-load solution integrated over
/// the strip; Hetényi 1946 as in Turcotte & Schubert problem 3-24; docs/science-flexure.md 2).
/// As the strip widens compared with alpha the centre tends to `local` (local compensation).
pub fn continuous_strip_load_deflection(
    x_m: f64,
    half_width_m: f64,
    local_m: f64,
    alpha_m: f64,
) -> f64 {
    let x = x_m.abs();
    let term = |s: f64| (-s).exp() * s.cos();
    let b = (half_width_m + x) / alpha_m;
    if x <= half_width_m {
        local_m * (1.0 - 0.5 * (term((half_width_m - x) / alpha_m) + term(b)))
    } else {
        local_m * 0.5 * (term((x - half_width_m) / alpha_m) - term(b))
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::tolerance::{assert_printed, assert_relative};
    use std::f64::consts::PI;

    /// docs/science-flexure.md 1 (the check table of SCIENCE.md 11, computed from the closed
    /// forms with nu = 0.25, g = 9.81): (E GPa, Te km, D N m, alpha km for drho 2300,
    /// 2 pi alpha km, w0 m for V0 = 1e12 N/m, alpha km for drho 2330, alpha km for drho 900).
    type Row = (f64, f64, f64, f64, f64, f64, f64, f64);
    const TABLE: [Row; 4] = [
        (
            70.0, 10.0, 6.2222e21, 32.408, 203.63, 683.79, 32.303, 40.975,
        ),
        (
            70.0, 25.0, 9.7222e22, 64.433, 404.84, 343.93, 64.224, 81.466,
        ),
        (
            100.0, 10.0, 8.8889e21, 35.431, 222.62, 625.45, 35.316, 44.797,
        ),
        (
            100.0, 25.0, 1.3889e23, 70.442, 442.60, 314.59, 70.214, 89.064,
        ),
    ];

    #[test]
    fn rigidity_and_flexural_parameter_match_the_published_table() {
        // Turcotte & Schubert eqs. 3-72, 3-127; values: SCIENCE.md 11 via docs/science-flexure.md 1.
        for (e_gpa, te_km, d, alpha, two_pi_alpha, w0, alpha_2330, alpha_900) in TABLE {
            let plate = ElasticPlate {
                young_modulus_pa: e_gpa * 1e9,
                poisson_ratio: 0.25,
                elastic_thickness_m: te_km * 1e3,
            };
            let what = |q: &str| format!("{q}, E {e_gpa} GPa, Te {te_km} km");
            assert_relative(plate.rigidity_n_m(), d, 5e-5, &what("D"));
            let a = plate.flexural_parameter_m(2300.0);
            assert_printed(a / 1e3, alpha, 3, &what("alpha"));
            assert_printed(2.0 * PI * a / 1e3, two_pi_alpha, 2, &what("2 pi alpha"));
            let peak = continuous_line_load_peak_m(1e12, plate.rigidity_n_m(), a);
            assert_printed(peak, w0, 2, &what("w0"));
            assert_printed(
                plate.flexural_parameter_m(2330.0) / 1e3,
                alpha_2330,
                3,
                &what("alpha, drho 2330"),
            );
            assert_printed(
                plate.flexural_parameter_m(900.0) / 1e3,
                alpha_900,
                3,
                &what("alpha, drho 900"),
            );
            // alpha grows as Te^(3/4) (SCIENCE.md 11 note).
            let thicker = plate.with_thickness(2.0 * plate.elastic_thickness_m);
            assert_relative(
                thicker.flexural_parameter_m(2300.0) / a,
                2f64.powf(0.75),
                1e-12,
                &what("alpha ~ Te^(3/4)"),
            );
            // The inverses give back what went in.
            assert_relative(
                rigidity_from_parameter(a, 2300.0),
                plate.rigidity_n_m(),
                1e-12,
                &what("D from alpha"),
            );
            assert_relative(
                elastic_thickness_from_rigidity(plate.rigidity_n_m(), e_gpa * 1e9, 0.25),
                te_km * 1e3,
                1e-12,
                &what("Te from D"),
            );
        }
    }

    #[test]
    fn the_continuous_line_load_crosses_zero_at_three_quarters_pi_alpha_with_its_bulge_at_pi_alpha()
    {
        // Turcotte & Schubert eqs. 3-129 to 3-131: w(0) = w0, w = 0 at 3 pi alpha / 4,
        // dw/dx = 0 at pi alpha with w = -w0 exp(-pi).
        let (w0, alpha) = (683.79, 32_408.0);
        assert_eq!(continuous_line_load_deflection(0.0, w0, alpha), w0);
        assert!(continuous_line_load_deflection(0.75 * PI * alpha, w0, alpha).abs() < 1e-9);
        let bulge = continuous_line_load_deflection(PI * alpha, w0, alpha);
        assert_relative(bulge, -w0 * (-PI).exp(), 1e-12, "forebulge height");
        let h = 1.0;
        for x in [PI * alpha - h, PI * alpha + h] {
            assert!(continuous_line_load_deflection(x, w0, alpha) > bulge);
        }
        assert_eq!(
            continuous_line_load_deflection(-5000.0, w0, alpha),
            continuous_line_load_deflection(5000.0, w0, alpha)
        );
    }

    #[test]
    fn the_broken_plate_line_load_has_twice_the_peak_and_crosses_zero_at_half_pi_alpha() {
        // Turcotte & Schubert eqs. 3-134, 3-135: w0 = V0 alpha^3/(4 D), w = w0 e^-x cos x.
        let plate = ElasticPlate {
            young_modulus_pa: 70e9,
            poisson_ratio: 0.25,
            elastic_thickness_m: 10e3,
        };
        let d = plate.rigidity_n_m();
        let alpha = plate.flexural_parameter_m(2300.0);
        let broken = broken_line_load_peak_m(1e12, d, alpha);
        // docs/science-flexure.md 1: twice the continuous w0 = 683.79 m.
        assert_printed(broken, 2.0 * 683.79, 1, "broken w0");
        assert!(broken_line_load_deflection(0.5 * PI * alpha, broken, alpha).abs() < 1e-9);
        let crest = broken_line_load_deflection(0.75 * PI * alpha, broken, alpha);
        assert_relative(
            crest,
            -broken * (-0.75 * PI).exp() * (0.5f64).sqrt(),
            1e-12,
            "broken forebulge",
        );
    }

    #[test]
    fn a_strip_load_wide_against_alpha_is_compensated_locally_and_conserves_the_load() {
        // Hetényi's strip solution (TS problem 3-24): the centre tends to q/(drho g) as
        // the strip widens; over the whole plate the deflection integrates to the load's
        // local volume (buoyancy balances the load).
        let alpha = 50_000.0;
        let wide = continuous_strip_load_deflection(0.0, 20.0 * alpha, 1000.0, alpha);
        assert!(
            (wide - 1000.0).abs() < 1e-3,
            "centre of a wide strip: {wide}"
        );
        let narrow = continuous_strip_load_deflection(0.0, 0.5 * alpha, 1000.0, alpha);
        assert!(
            narrow < 700.0,
            "a narrow strip is carried regionally: {narrow}"
        );
        let (a, h) = (0.5 * alpha, 100.0);
        let integral: f64 = (-40_000..40_000)
            .map(|i| continuous_strip_load_deflection((i as f64 + 0.5) * h, a, 1000.0, alpha) * h)
            .sum();
        assert_relative(integral, 1000.0 * 2.0 * a, 1e-4, "load volume");
    }

    #[test]
    fn an_implausible_plate_is_refused() {
        assert!(ElasticPlate::default().validate().is_ok());
        let km_as_m = ElasticPlate::default().with_thickness(20e6);
        assert!(km_as_m.validate().is_err());
        let gpa_as_pa = ElasticPlate {
            young_modulus_pa: 70.0,
            ..Default::default()
        };
        assert!(gpa_as_pa.validate().is_err());
    }
}
