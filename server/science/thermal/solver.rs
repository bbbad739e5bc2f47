//! The transient conduction solver of the sediment column and the basement below it
//! (docs/science-thermal.md 5).
//!
//! Grid: nodes fixed in depth below the depositional surface, evenly spaced through
//! the deepest sediment column of the history, then growing by 15 % a node to at most
//! [`BASEMENT_NODE_SPACING_MAX_M`] through the basement. Each step (ages decreasing):
//!
//! 1. Burial: every node takes the temperature its grain had at the step's start, by
//!    linear interpolation at the depth it was at then ([`super::column::Interval`]);
//!    grains laid down during the step arrive at the surface temperature.
//! 2. Conduction: one backward-Euler step of `rho c dT/dt = d/dz(k dT/dz) + A` by finite
//!    volumes whose heat capacities, heat productions and inter-node resistances are
//!    exact integrals through the layers (so a layered steady column is exact at the
//!    nodes); the surface node holds the surface temperature and the base node
//!    receives the basal heat flow.
//!
//! Backward Euler damps the short-wavelength error that the interpolation of step 1
//! leaves, which Crank–Nicolson would not. Its first-order time error is measured in
//! the tests (halving the step).

use super::column::{ColumnIntegrals, ThermalLayer};

/// Largest node spacing in the basement (m).
pub const BASEMENT_NODE_SPACING_MAX_M: f64 = 1000.0;

/// Most nodes in the sediment part of the grid, so no column sizes the work beyond a
/// bound (the spacing grows instead).
pub const MAX_SEDIMENT_NODES: usize = 400;

/// Node depths (m, increasing from 0) for a history whose deepest sediment column is
/// `max_sediment_m`, with a basement slab of `slab_m` below it and sediment node
/// spacing of about `spacing_m`.
pub(crate) fn grid(max_sediment_m: f64, slab_m: f64, spacing_m: f64) -> Vec<f64> {
    let cells = ((max_sediment_m / spacing_m).ceil() as usize).clamp(1, MAX_SEDIMENT_NODES);
    let dz = if max_sediment_m > 0.0 {
        max_sediment_m / cells as f64
    } else {
        spacing_m
    };
    let mut z: Vec<f64> = (0..=cells)
        .map(|i| i as f64 * dz)
        .take_while(|z| *z <= max_sediment_m + 1e-9)
        .collect();
    let bottom = max_sediment_m + slab_m;
    let mut step = dz;
    while *z.last().unwrap_or(&0.0) < bottom - 1e-9 {
        step = (step * 1.15).min(BASEMENT_NODE_SPACING_MAX_M);
        let next = (z.last().unwrap_or(&0.0) + step).min(bottom);
        z.push(next);
    }
    z
}

/// The finite-volume coefficients of the grid through one column.
pub(crate) struct Coefficients {
    /// Heat capacity of each node's control volume, J m^-2 K^-1.
    pub capacity: Vec<f64>,
    /// Heat produced in each node's control volume, W m^-2.
    pub production: Vec<f64>,
    /// Conductance between node i and i + 1, W m^-2 K^-1.
    pub conductance: Vec<f64>,
}

pub(crate) fn coefficients(nodes: &[f64], layers: &[ThermalLayer]) -> Coefficients {
    let integrals = ColumnIntegrals::new(layers);
    let n = nodes.len();
    let mut hint = 0;
    let mut at_node = Vec::with_capacity(n);
    let mut at_mid = Vec::with_capacity(n);
    for i in 0..n {
        at_node.push(integrals.to_depth(nodes[i], &mut hint));
        if i + 1 < n {
            at_mid.push(integrals.to_depth(0.5 * (nodes[i] + nodes[i + 1]), &mut hint));
        }
    }
    let mut capacity = vec![0.0; n];
    let mut production = vec![0.0; n];
    for i in 1..n {
        let upper = at_mid[i - 1];
        let lower = if i + 1 < n { at_mid[i] } else { at_node[i] };
        capacity[i] = lower[0] - upper[0];
        production[i] = lower[1] - upper[1];
    }
    let conductance = (0..n - 1)
        .map(|i| 1.0 / (at_node[i + 1][2] - at_node[i][2]))
        .collect();
    Coefficients {
        capacity,
        production,
        conductance,
    }
}

/// One backward-Euler step of `dt_s` seconds from `start` (already carried with the
/// burial) to the returned temperatures, with `surface_c` at node 0 and
/// `basal_heat_flow_w_m2` entering the last node. Tridiagonal solve (Thomas), stable
/// because the matrix is diagonally dominant.
pub(crate) fn conduction_step(
    c: &Coefficients,
    start: &[f64],
    dt_s: f64,
    surface_c: f64,
    basal_heat_flow_w_m2: f64,
) -> Vec<f64> {
    let n = start.len();
    // Unknowns are nodes 1..n-1; row r is node r + 1.
    let m = n - 1;
    let mut lower = vec![0.0; m];
    let mut diag = vec![0.0; m];
    let mut upper = vec![0.0; m];
    let mut rhs = vec![0.0; m];
    for r in 0..m {
        let i = r + 1;
        let cap = c.capacity[i] / dt_s;
        let g_up = c.conductance[i - 1];
        let g_down = if i + 1 < n { c.conductance[i] } else { 0.0 };
        diag[r] = cap + g_up + g_down;
        rhs[r] = cap * start[i] + c.production[i];
        if r > 0 {
            lower[r] = -g_up;
        } else {
            rhs[r] += g_up * surface_c;
        }
        if i + 1 < n {
            upper[r] = -g_down;
        } else {
            rhs[r] += basal_heat_flow_w_m2;
        }
    }
    for r in 1..m {
        let w = lower[r] / diag[r - 1];
        diag[r] -= w * upper[r - 1];
        rhs[r] -= w * rhs[r - 1];
    }
    let mut t = vec![0.0; n];
    t[0] = surface_c;
    t[m] = rhs[m - 1] / diag[m - 1];
    for r in (0..m - 1).rev() {
        t[r + 1] = (rhs[r] - upper[r] * t[r + 2]) / diag[r];
    }
    t
}

/// Linear interpolation of the node temperatures at `depth_m`; below the last node the
/// profile is continued with the last gradient.
pub(crate) fn temperature_at(nodes: &[f64], t: &[f64], depth_m: f64) -> f64 {
    if depth_m <= 0.0 {
        return t[0];
    }
    let i = nodes.partition_point(|z| *z < depth_m);
    let n = nodes.len();
    let (a, b) = if i >= n { (n - 2, n - 1) } else { (i - 1, i) };
    let s = (depth_m - nodes[a]) / (nodes[b] - nodes[a]);
    t[a] + s * (t[b] - t[a])
}
