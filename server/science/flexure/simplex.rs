//! Nelder-Mead minimisation in a few dimensions (Nelder & Mead 1965, with the standard
//! coefficients: reflection 1, expansion 2, contraction 1/2, shrink 1/2). The flexure fits
//! use it to polish a grid scan along the curved valleys of their misfit surfaces, where
//! alternating one-dimensional searches crawl.

/// The minimum of `f` from the simplex around `start` with edge lengths `scale`, stopping
/// when the simplex's values agree within `f_tol` (absolute) or after `max_evaluations`.
/// Returns the best point and its value.
pub(crate) fn nelder_mead<const N: usize>(
    mut f: impl FnMut(&[f64; N]) -> f64,
    start: [f64; N],
    scale: [f64; N],
    f_tol: f64,
    max_evaluations: usize,
) -> ([f64; N], f64) {
    let mut simplex: Vec<([f64; N], f64)> = Vec::with_capacity(N + 1);
    simplex.push((start, f(&start)));
    for i in 0..N {
        let mut p = start;
        p[i] += scale[i];
        simplex.push((p, f(&p)));
    }
    let mut evaluations = N + 1;
    while evaluations < max_evaluations {
        simplex.sort_by(|a, b| a.1.total_cmp(&b.1));
        let (best, worst) = (simplex[0].1, simplex[N].1);
        if (worst - best).abs() <= f_tol {
            break;
        }
        let mut centroid = [0.0; N];
        for (p, _) in &simplex[..N] {
            for i in 0..N {
                centroid[i] += p[i] / N as f64;
            }
        }
        let along = |t: f64| {
            let mut q = [0.0; N];
            for i in 0..N {
                q[i] = centroid[i] + t * (simplex[N].0[i] - centroid[i]);
            }
            q
        };
        let reflected = along(-1.0);
        let fr = f(&reflected);
        evaluations += 1;
        if fr < simplex[0].1 {
            let expanded = along(-2.0);
            let fe = f(&expanded);
            evaluations += 1;
            simplex[N] = if fe < fr {
                (expanded, fe)
            } else {
                (reflected, fr)
            };
        } else if fr < simplex[N - 1].1 {
            simplex[N] = (reflected, fr);
        } else {
            let contracted = if fr < worst { along(-0.5) } else { along(0.5) };
            let fc = f(&contracted);
            evaluations += 1;
            if fc < worst.min(fr) {
                simplex[N] = (contracted, fc);
            } else {
                let anchor = simplex[0].0;
                for (p, v) in simplex.iter_mut().skip(1) {
                    for i in 0..N {
                        p[i] = anchor[i] + 0.5 * (p[i] - anchor[i]);
                    }
                    *v = f(p);
                }
                evaluations += N;
            }
        }
    }
    simplex.sort_by(|a, b| a.1.total_cmp(&b.1));
    simplex[0]
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn it_finds_the_bottom_of_the_rosenbrock_valley() {
        // Rosenbrock (1960): minimum 0 at (1, 1) along a curved valley.
        let (p, v) = nelder_mead(
            |x: &[f64; 2]| 100.0 * (x[1] - x[0] * x[0]).powi(2) + (1.0 - x[0]).powi(2),
            [-1.2, 1.0],
            [0.5, 0.5],
            1e-14,
            5000,
        );
        assert!(v < 1e-8, "{v}");
        assert!(
            (p[0] - 1.0).abs() < 1e-3 && (p[1] - 1.0).abs() < 1e-3,
            "{p:?}"
        );
    }
}
