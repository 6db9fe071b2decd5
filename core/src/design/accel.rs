//! Anderson acceleration of the Δp controllers' outer loop.
//!
//! Each round of the loop (design/operate.rs) solves the network with the
//! controllers' resistances fixed, then moves every controller to the
//! resistance at which it would hold its law if the rest of the network
//! stood still ([`super::Derivation::regulate`]): a fixed-point iteration
//! x ↦ G(x) on the controllers' log-resistances. All controllers of a
//! building move together and their flows share the mains, so the outside
//! Δp each one sees shifts with the others' steps: the plain iteration
//! converges linearly, by about half per round on the generated buildings.
//!
//! Anderson's method (D. G. Anderson, "Iterative procedures for nonlinear
//! integral equations", J. ACM 12 (1965) 547–560; in the form of H. F.
//! Walker and P. Ni, "Anderson acceleration for fixed-point iterations",
//! SIAM J. Numer. Anal. 49 (2011) 1715–1735) mixes the last few steps: with
//! residuals f_k = G(x_k) − x_k it takes γ minimising ‖f_k − ΔF·γ‖₂ over the
//! differences of the last `m` residuals and steps to
//! x_{k+1} = G(x_k) − ΔG·γ. The loop still stops only when a solve finds
//! every controller within its tolerance, so what it ends on satisfies the
//! same test as before; only the number of rounds changes.

use std::collections::VecDeque;

/// Rounds of history mixed (small depths suffice for linearly converging
/// iterations, Walker & Ni; with 3 the generated 10,000-emitter building's
/// loop took 7 solves instead of 16, and 5 since every round moves every
/// controller).
const DEPTH: usize = 3;
/// Largest change of a log-resistance the mixed step may make beyond the
/// plain one (a factor e² on the resistance); beyond it the plain step is
/// taken and the history restarts.
const MAX_EXTRA_LOG_STEP: f64 = 2.0;

/// History of the outer loop: the iterates and their images.
#[derive(Debug, Default)]
pub(super) struct Anderson {
    xs: VecDeque<Vec<f64>>,
    gs: VecDeque<Vec<f64>>,
}

impl Anderson {
    /// Record x_k and G(x_k) and return the next iterate (G(x_k) itself
    /// until there is history to mix, or when the mixed step is not
    /// trustworthy).
    pub(super) fn step(&mut self, x: Vec<f64>, g: Vec<f64>) -> Vec<f64> {
        if self.xs.front().is_some_and(|p| p.len() != x.len()) {
            self.xs.clear();
            self.gs.clear();
        }
        self.xs.push_back(x);
        self.gs.push_back(g);
        while self.xs.len() > DEPTH + 1 {
            self.xs.pop_front();
            self.gs.pop_front();
        }
        let n = self.xs.len();
        let Some(gk) = self.gs.back() else { return Vec::new() };
        if n < 2 {
            return gk.clone();
        }
        let f = |j: usize| -> Vec<f64> { self.gs[j].iter().zip(&self.xs[j]).map(|(g, x)| g - x).collect() };
        let fs: Vec<Vec<f64>> = (0..n).map(f).collect();
        let cols = n - 1;
        // ΔF_j = f_{j+1} − f_j, ΔG_j = g_{j+1} − g_j.
        let df: Vec<Vec<f64>> = (0..cols).map(|j| fs[j + 1].iter().zip(&fs[j]).map(|(a, b)| a - b).collect()).collect();
        let dg: Vec<Vec<f64>> =
            (0..cols).map(|j| self.gs[j + 1].iter().zip(&self.gs[j]).map(|(a, b)| a - b).collect()).collect();
        let fk = &fs[n - 1];
        // Normal equations (at most 3×3), lightly regularised.
        let dot = |a: &[f64], b: &[f64]| a.iter().zip(b).map(|(x, y)| x * y).sum::<f64>();
        let mut a = vec![vec![0.0; cols]; cols];
        let mut rhs = vec![0.0; cols];
        for i in 0..cols {
            for j in 0..cols {
                a[i][j] = dot(&df[i], &df[j]);
            }
            rhs[i] = dot(&df[i], fk);
        }
        let scale = (0..cols).map(|i| a[i][i]).fold(0.0_f64, f64::max);
        if scale <= 0.0 || !scale.is_finite() {
            return gk.clone();
        }
        for (i, row) in a.iter_mut().enumerate() {
            row[i] += 1e-10 * scale;
        }
        let Some(gamma) = solve_small(a, rhs) else { return gk.clone() };
        let mut next = gk.clone();
        for (j, gj) in gamma.iter().enumerate() {
            for (v, d) in next.iter_mut().zip(&dg[j]) {
                *v -= gj * d;
            }
        }
        let trusted = next.iter().zip(gk).all(|(v, g)| v.is_finite() && (v - g).abs() <= MAX_EXTRA_LOG_STEP);
        if trusted {
            next
        } else {
            let plain = gk.clone();
            self.xs.clear();
            self.gs.clear();
            plain
        }
    }
}

/// Gaussian elimination with partial pivoting on a small dense system.
fn solve_small(mut a: Vec<Vec<f64>>, mut b: Vec<f64>) -> Option<Vec<f64>> {
    let n = b.len();
    for c in 0..n {
        let p = (c..n).max_by(|&i, &j| a[i][c].abs().total_cmp(&a[j][c].abs()))?;
        if a[p][c].abs() < 1e-300 {
            return None;
        }
        a.swap(c, p);
        b.swap(c, p);
        let (pivot_rows, rest) = a.split_at_mut(c + 1);
        let pivot = &pivot_rows[c];
        for (offset, row) in rest.iter_mut().enumerate() {
            let factor = row[c] / pivot[c];
            for (v, pv) in row.iter_mut().zip(pivot).skip(c) {
                *v -= factor * pv;
            }
            b[c + 1 + offset] -= factor * b[c];
        }
    }
    let mut x = vec![0.0; n];
    for r in (0..n).rev() {
        let s: f64 = (r + 1..n).map(|k| a[r][k] * x[k]).sum();
        x[r] = (b[r] - s) / a[r][r];
    }
    x.iter().all(|v| v.is_finite()).then_some(x)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A linear contraction x ↦ M·x + c with a slow mode (0.9) converges in
    /// far fewer accelerated steps than plain ones (on a linear map
    /// Anderson with enough depth is a Krylov method).
    #[test]
    fn anderson_beats_the_plain_iteration_on_a_slow_linear_map() {
        let g = |x: &[f64]| vec![0.9 * x[0] + 0.05 * x[1] + 1.0, 0.02 * x[0] + 0.5 * x[1] - 1.0];
        // Fixed point: solve (I − M) x = c with c = (1, −1), by Cramer's rule.
        let det = (1.0 - 0.9) * (1.0 - 0.5) - 0.05 * 0.02;
        let star = [((1.0 - 0.5) - 0.05) / det, (0.02 - (1.0 - 0.9)) / det];
        let err = |x: &[f64]| ((x[0] - star[0]).powi(2) + (x[1] - star[1]).powi(2)).sqrt();
        let rounds = |accelerate: bool| {
            let mut acc = Anderson::default();
            let mut x = vec![star[0] + 1.0, star[1] - 1.0];
            for k in 1..=200 {
                let gx = g(&x);
                x = if accelerate { acc.step(x, gx) } else { gx };
                if err(&x) < 1e-10 {
                    return k;
                }
            }
            usize::MAX
        };
        let (plain, fast) = (rounds(false), rounds(true));
        assert!(plain > 150 && fast <= 6, "plain {plain}, accelerated {fast}");
    }

    #[test]
    fn small_systems_solve_and_singular_ones_are_refused() {
        let x = solve_small(vec![vec![2.0, 1.0], vec![1.0, 3.0]], vec![3.0, 5.0]).unwrap();
        assert!((x[0] - 0.8).abs() < 1e-12 && (x[1] - 1.4).abs() < 1e-12, "{x:?}");
        assert!(solve_small(vec![vec![0.0, 0.0], vec![0.0, 0.0]], vec![1.0, 1.0]).is_none());
    }
}
