//! One-dimensional minimisation and root finding for the stretching fits and the
//! forward model. Textbook methods (golden-section search with parabolic steps after
//! Brent (1973); bisection), written here because the crate keeps its science
//! numerics dependency-free and these need only a few lines.

/// Golden ratio complement used by the golden-section steps.
const GOLDEN: f64 = 0.381_966_011_250_105_1;

/// The minimum of `f` on `[lo, hi]`, to an absolute tolerance `tol` in x.
///
/// Brent's method: golden-section search accelerated by parabolic interpolation.
/// For a unimodal `f` it returns the minimiser; otherwise a local minimiser. The
/// bracket ends themselves are candidates, so a minimum on a bound is found too.
/// Returns `(x, f(x))`.
pub(crate) fn minimise(mut f: impl FnMut(f64) -> f64, lo: f64, hi: f64, tol: f64) -> (f64, f64) {
    let (mut a, mut b) = (lo.min(hi), lo.max(hi));
    let mut x = a + GOLDEN * (b - a);
    let (mut w, mut v) = (x, x);
    let mut fx = f(x);
    let (mut fw, mut fv) = (fx, fx);
    let mut d: f64 = 0.0;
    let mut e: f64 = 0.0;
    for _ in 0..200 {
        let m = 0.5 * (a + b);
        let tol1 = tol.max(1e-12 * x.abs());
        let tol2 = 2.0 * tol1;
        if (x - m).abs() <= tol2 - 0.5 * (b - a) {
            break;
        }
        let mut golden = true;
        if e.abs() > tol1 {
            let r = (x - w) * (fx - fv);
            let q0 = (x - v) * (fx - fw);
            let mut p = (x - v) * q0 - (x - w) * r;
            let mut q = 2.0 * (q0 - r);
            if q > 0.0 {
                p = -p;
            }
            q = q.abs();
            if p.abs() < (0.5 * q * e).abs() && p > q * (a - x) && p < q * (b - x) {
                e = d;
                d = p / q;
                let u = x + d;
                if u - a < tol2 || b - u < tol2 {
                    d = if x < m { tol1 } else { -tol1 };
                }
                golden = false;
            }
        }
        if golden {
            e = if x < m { b - x } else { a - x };
            d = GOLDEN * e;
        }
        let u = if d.abs() >= tol1 {
            x + d
        } else {
            x + tol1.copysign(d)
        };
        let fu = f(u);
        if fu <= fx {
            if u < x {
                b = x;
            } else {
                a = x;
            }
            (v, fv, w, fw, x, fx) = (w, fw, x, fx, u, fu);
        } else {
            if u < x {
                a = u;
            } else {
                b = u;
            }
            if fu <= fw || w == x {
                (v, fv, w, fw) = (w, fw, u, fu);
            } else if fu <= fv || v == x || v == w {
                (v, fv) = (u, fu);
            }
        }
    }
    let (flo, fhi) = (f(lo.min(hi)), f(lo.max(hi)));
    if flo < fx && flo <= fhi {
        (lo.min(hi), flo)
    } else if fhi < fx {
        (lo.max(hi), fhi)
    } else {
        (x, fx)
    }
}

/// Scan `f` on `n` evenly spaced points of `[lo, hi]`, then polish the best one with
/// [`minimise`] on the bracket of its neighbours. Robust against the shallow second
/// minima a misfit surface can have. Returns `(x, f(x))`.
pub(crate) fn scan_then_minimise(
    mut f: impl FnMut(f64) -> f64,
    lo: f64,
    hi: f64,
    n: usize,
    tol: f64,
) -> (f64, f64) {
    let n = n.max(3);
    let step = (hi - lo) / (n - 1) as f64;
    let (mut best_i, mut best_f) = (0, f64::INFINITY);
    for i in 0..n {
        let fi = f(lo + step * i as f64);
        if fi < best_f {
            (best_i, best_f) = (i, fi);
        }
    }
    let a = lo + step * best_i.saturating_sub(1) as f64;
    let b = lo + step * (best_i + 1).min(n - 1) as f64;
    minimise(f, a, b, tol)
}

/// The root of a monotone `f` on `[lo, hi]` by bisection to an absolute tolerance
/// `tol` in x, or `None` when `f(lo)` and `f(hi)` have the same sign.
pub(crate) fn bisect_root(
    mut f: impl FnMut(f64) -> f64,
    lo: f64,
    hi: f64,
    tol: f64,
) -> Option<f64> {
    let (mut a, mut b) = (lo, hi);
    let (fa, fb) = (f(a), f(b));
    if fa == 0.0 {
        return Some(a);
    }
    if fb == 0.0 {
        return Some(b);
    }
    if fa.signum() == fb.signum() || !fa.is_finite() || !fb.is_finite() {
        return None;
    }
    for _ in 0..200 {
        let m = 0.5 * (a + b);
        if (b - a).abs() <= tol {
            return Some(m);
        }
        let fm = f(m);
        if fm == 0.0 {
            return Some(m);
        }
        if fm.signum() == fa.signum() {
            a = m;
        } else {
            b = m;
        }
    }
    Some(0.5 * (a + b))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::tolerance::assert_relative;

    #[test]
    fn brent_finds_a_smooth_minimum_and_a_minimum_on_a_bound() {
        // (x - 2)^2 + 1 has its minimum at x = 2 (algebra).
        let (x, fx) = minimise(|x| (x - 2.0).powi(2) + 1.0, 0.0, 5.0, 1e-10);
        assert!((x - 2.0).abs() < 1e-7, "{x}");
        assert!((fx - 1.0).abs() < 1e-12);
        // A rising line has its minimum on the lower bound.
        let (x, _) = minimise(|x| 3.0 * x, 1.0, 4.0, 1e-10);
        assert_eq!(x, 1.0);
    }

    #[test]
    fn a_scan_escapes_a_shallow_second_minimum() {
        // cos(x) + 0.1 x on [0, 12]: local minima at pi - asin(0.1) and 3 pi - asin(0.1)
        // (algebra: sin x = 0.1 with cos x < 0); the first is lower by the rising term.
        let (x, _) = scan_then_minimise(|x| x.cos() + 0.1 * x, 0.0, 12.0, 25, 1e-10);
        assert_relative(
            x,
            std::f64::consts::PI - 0.1f64.asin(),
            1e-7,
            "first minimum",
        );
    }

    #[test]
    fn bisection_finds_a_square_root_and_refuses_a_bracket_without_a_root() {
        let r = bisect_root(|x| x * x - 2.0, 0.0, 2.0, 1e-12).unwrap();
        assert_relative(r, 2f64.sqrt(), 1e-11, "sqrt 2");
        assert!(bisect_root(|x| x * x + 1.0, 0.0, 2.0, 1e-12).is_none());
    }
}
