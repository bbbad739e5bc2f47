//! The spectral (Fourier) solution of the thin-plate equation for a continuous plate
//! (docs/science-flexure.md 3).
//!
//! `D d4w/dx4 + drho g w = q` becomes, in wavenumber k, `w(k) = Phi(k) q(k)/(drho g)` with
//! the flexural response `Phi(k) = [1 + D k^4/(drho g)]^-1 = [1 + (k alpha)^4 / 4]^-1`
//! (SCIENCE.md 11; Watts, *Isostasy and Flexure*, ch. 4). Loads are given as their local
//! (Airy) deflection `q/(drho g)` on a regular grid, so Te = 0 (Phi = 1) gives them back.
//!
//! Wrap-around. A discrete Fourier transform treats the grid as one period of a periodic
//! load, so a load near one end would flex the plate at the other. The grid is therefore
//! extended by its mirror image (whole-sample symmetric extension, period 2(n - 1) steps):
//! the extended load is continuous at the seams, a load held constant to an end is seen
//! as continuing beyond it, and the nearest image of any load is twice the distance from
//! the load to the grid end. Callers pad their region of interest by several alpha
//! (see [`super::solver`]), so images lie beyond `2 PAD` flexural parameters and their
//! effect is below `exp(-2 PAD)`.

use rustfft::num_complex::Complex;
use rustfft::{Fft, FftPlanner};
use std::f64::consts::PI;
use std::sync::Arc;

/// The flexural response `Phi(k) = 1 / (1 + (k alpha)^4 / 4)` at wavenumber k (rad m^-1).
pub fn flexural_response(wavenumber_per_m: f64, alpha_m: f64) -> f64 {
    1.0 / (1.0 + 0.25 * (wavenumber_per_m * alpha_m).powi(4))
}

/// A prepared spectral solver for one grid (n nodes, spacing `step_m`) and one flexural
/// parameter: the FFT plans and the response are computed once and reused for every load
/// (every age of a section).
pub struct SpectralPlate {
    nodes: usize,
    forward: Arc<dyn Fft<f64>>,
    inverse: Arc<dyn Fft<f64>>,
    /// Phi at each FFT bin, divided by the FFT length (rustfft does not normalise).
    response: Vec<f64>,
}

impl SpectralPlate {
    /// Prepare for `nodes >= 2` nodes `step_m` apart and flexural parameter `alpha_m`.
    /// The transform length is `2 (nodes - 1)`; it is fastest when that is a power of two.
    pub fn new(nodes: usize, step_m: f64, alpha_m: f64) -> Self {
        assert!(nodes >= 2, "a spectral plate needs two nodes or more");
        let len = 2 * (nodes - 1);
        let mut planner = FftPlanner::new();
        let period_m = len as f64 * step_m;
        let response = (0..len)
            .map(|j| {
                // Bins above len/2 are the negative wavenumbers.
                let signed = if j <= len / 2 {
                    j as f64
                } else {
                    j as f64 - len as f64
                };
                flexural_response(2.0 * PI * signed / period_m, alpha_m) / len as f64
            })
            .collect();
        SpectralPlate {
            nodes,
            forward: planner.plan_fft_forward(len),
            inverse: planner.plan_fft_inverse(len),
            response,
        }
    }

    /// The plate's deflection (m) at the nodes under a load given as its local deflection
    /// `q/(drho g)` (m) at the nodes.
    pub fn deflect(&self, local_deflection_m: &[f64]) -> Vec<f64> {
        assert_eq!(local_deflection_m.len(), self.nodes, "one load per node");
        let n = self.nodes;
        let len = 2 * (n - 1);
        let mut buffer: Vec<Complex<f64>> = Vec::with_capacity(len);
        buffer.extend(local_deflection_m.iter().map(|&v| Complex::new(v, 0.0)));
        buffer.extend(
            local_deflection_m[1..n - 1]
                .iter()
                .rev()
                .map(|&v| Complex::new(v, 0.0)),
        );
        self.forward.process(&mut buffer);
        for (b, phi) in buffer.iter_mut().zip(&self.response) {
            *b *= *phi;
        }
        self.inverse.process(&mut buffer);
        buffer[..n].iter().map(|c| c.re).collect()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_response_is_one_at_long_wavelengths_and_a_half_at_k_alpha_root_two() {
        // Phi(0) = 1 (a uniform load is compensated locally); (k alpha)^4/4 = 1 at
        // k alpha = sqrt 2, where Phi = 1/2 (SCIENCE.md 11 form).
        assert_eq!(flexural_response(0.0, 30e3), 1.0);
        let k = 2f64.sqrt() / 30e3;
        assert!((flexural_response(k, 30e3) - 0.5).abs() < 1e-12);
        assert_eq!(flexural_response(1e-3, 0.0), 1.0);
    }

    #[test]
    fn a_uniform_load_comes_back_unchanged_and_te_zero_is_the_identity() {
        let load: Vec<f64> = (0..129).map(|i| 0.5 + (i as f64 * 0.3).sin()).collect();
        let local = SpectralPlate::new(129, 1000.0, 0.0).deflect(&load);
        for (a, b) in local.iter().zip(&load) {
            assert!((a - b).abs() < 1e-12);
        }
        let uniform = SpectralPlate::new(129, 1000.0, 40e3).deflect(&[750.0; 129]);
        assert!(uniform.iter().all(|w| (w - 750.0).abs() < 1e-9));
    }
}
