//! A finite-difference solution of the thin-plate equation for one piece of a broken plate
//! (docs/science-flexure.md 4).
//!
//! `(alpha^4/4) d4w/dx4 + w = q/(drho g)` on nodes `0..n`, spacing h, with the central
//! five-point fourth difference. Node 0 is the plate's free end (the break): bending moment
//! and shear vanish, `w'' = 0` and `w''' = 0`, imposed by two ghost nodes
//! (`w_-1 = 2 w_0 - w_1`, `w_-2 = 4 w_0 - 4 w_1 + w_2`). The last node is a mirror
//! (symmetry) end, `w' = 0` and `w''' = 0` (`w_n+1 = w_n-1`, `w_n+2 = w_n-2`): it stands
//! several alpha beyond the loads, where the plate is either unloaded or under a load
//! held constant, and either way flat. The rows of the two end nodes are halved (each
//! node carries half a cell), which makes the matrix symmetric and positive definite, so
//! it is factorised once (banded LDL^T, bandwidth 2) and every load is an O(n) solve.
//! Second-order accurate in h (checked against the closed form in the tests).

/// A prepared solver for one plate piece.
pub struct FreeEndPlate {
    /// LDL^T factors: pivots and the first and second sub-diagonals of L.
    pivot: Vec<f64>,
    lower1: Vec<f64>,
    lower2: Vec<f64>,
}

impl FreeEndPlate {
    /// Prepare for `nodes >= 5` nodes `step_m` apart, free at node 0, flexural parameter
    /// `alpha_m > 0`.
    pub fn new(nodes: usize, step_m: f64, alpha_m: f64) -> Self {
        assert!(nodes >= 5, "a plate piece needs five nodes or more");
        let c = alpha_m.powi(4) / (4.0 * step_m.powi(4));
        let n = nodes;
        // Symmetric pentadiagonal matrix: diagonal, first and second super-diagonals.
        let mut diag = vec![6.0 * c + 1.0; n];
        let mut off1 = vec![-4.0 * c; n - 1];
        let off2 = vec![c; n - 2];
        // Free end (node 0, half row) and its neighbour.
        diag[0] = c + 0.5;
        off1[0] = -2.0 * c;
        diag[1] = 5.0 * c + 1.0;
        // Mirror end (node n-1, half row) and its neighbour.
        diag[n - 1] = 3.0 * c + 0.5;
        diag[n - 2] = 7.0 * c + 1.0;
        // Banded LDL^T.
        let mut pivot = vec![0.0f64; n];
        let mut lower1 = vec![0.0f64; n];
        let mut lower2 = vec![0.0f64; n];
        for i in 0..n {
            let mut d = diag[i];
            if i >= 1 {
                d -= lower1[i - 1].powi(2) * pivot[i - 1];
            }
            if i >= 2 {
                d -= lower2[i - 2].powi(2) * pivot[i - 2];
            }
            pivot[i] = d;
            if i + 1 < n {
                let mut e = off1[i];
                if i >= 1 {
                    e -= lower2[i - 1] * pivot[i - 1] * lower1[i - 1];
                }
                lower1[i] = e / d;
            }
            if i + 2 < n {
                lower2[i] = off2[i] / d;
            }
        }
        FreeEndPlate {
            pivot,
            lower1,
            lower2,
        }
    }

    /// Deflection (m) at the nodes for the right-hand side `load`: at each node the local
    /// deflection of the distributed load times the node's share of a cell (1 inside, 1/2
    /// at the two ends), plus `V/(drho g h)` for a line load V carried by the node.
    pub fn deflect(&self, load: &[f64]) -> Vec<f64> {
        let n = self.pivot.len();
        assert_eq!(load.len(), n, "one load per node");
        let mut x = load.to_vec();
        for i in 0..n {
            if i >= 1 {
                x[i] -= self.lower1[i - 1] * x[i - 1];
            }
            if i >= 2 {
                x[i] -= self.lower2[i - 2] * x[i - 2];
            }
        }
        for (xi, d) in x.iter_mut().zip(&self.pivot) {
            *xi /= d;
        }
        for i in (0..n).rev() {
            if i + 1 < n {
                x[i] -= self.lower1[i] * x[i + 1];
            }
            if i + 2 < n {
                x[i] -= self.lower2[i] * x[i + 2];
            }
        }
        x
    }
}
