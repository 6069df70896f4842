//! Gauss–Legendre quadrature for the pad integrals that have no closed form (the button pad).
//!
//! Nodes and weights are computed by Newton's method on the Legendre polynomial Pₙ (three-term
//! recurrence), so no constants need copying from a handbook; an n-point rule integrates
//! polynomials of degree 2n − 1 exactly (checked in the tests below). Build time only: this is
//! never on the per-sample path.

use core::f64::consts::PI;

/// Points of the rule used for the pad integrals.
pub(crate) const POINTS: usize = 24;

/// Panels the interval is split into (composite rule): keeps the error small even when the
/// integrand's nearest complex singularity sits close to the interval (a button pad touching
/// the axis).
pub(crate) const PANELS: u32 = 8;

/// Legendre polynomial Pₙ(x) and its derivative, by the three-term recurrence.
fn legendre(n: usize, x: f64) -> (f64, f64) {
    let mut p_prev = 1.0;
    let mut p = x;
    let mut k = 1.0_f64;
    for _ in 1..n {
        k += 1.0;
        let p_next = ((2.0 * k - 1.0) * x * p - (k - 1.0) * p_prev) / k;
        p_prev = p;
        p = p_next;
    }
    // n ≥ 1 and |x| < 1 for the interior roots sought, so 1 − x² > 0.
    let n_f = k;
    let dp = n_f * (x * p - p_prev) / (x * x - 1.0);
    (p, dp)
}

/// The N-point Gauss–Legendre rule on [−1, 1] as `(node, weight)` pairs, nodes descending.
pub(crate) fn rule<const N: usize>() -> [(f64, f64); N] {
    let mut out = [(0.0, 0.0); N];
    let n_f = N as f64;
    for (i, slot) in out.iter_mut().enumerate() {
        // Tricomi's approximation of the i-th root, then Newton; converges in a few steps.
        let mut x = libm::cos(PI * (i as f64 + 0.75) / (n_f + 0.5));
        let mut dp = 1.0;
        for _ in 0..100 {
            let (p, d) = legendre(N, x);
            dp = d;
            let dx = p / d;
            x -= dx;
            if libm::fabs(dx) <= 1e-16 {
                break;
            }
        }
        let (_, d) = legendre(N, x);
        if d.is_finite() {
            dp = d;
        }
        *slot = (x, 2.0 / ((1.0 - x * x) * dp * dp));
    }
    out
}

/// ∫ₐᵇ f(t) dt by the composite N-point rule on `panels` equal panels.
pub(crate) fn integrate<const N: usize>(
    rule: &[(f64, f64); N],
    a: f64,
    b: f64,
    panels: u32,
    mut f: impl FnMut(f64) -> f64,
) -> f64 {
    let panels = panels.max(1);
    let h = (b - a) / f64::from(panels);
    let mut sum = 0.0;
    for k in 0..panels {
        let lo = a + h * f64::from(k);
        let mid = lo + 0.5 * h;
        let half = 0.5 * h;
        let panel: f64 = rule.iter().map(|&(x, w)| w * f(mid + half * x)).sum();
        sum += half * panel;
    }
    sum
}

#[cfg(test)]
#[allow(
    clippy::float_cmp,
    clippy::cast_possible_truncation,
    clippy::cast_possible_wrap
)]
mod tests {
    use super::*;

    #[test]
    fn weights_sum_to_two_and_nodes_are_symmetric() {
        let r = rule::<POINTS>();
        let s: f64 = r.iter().map(|p| p.1).sum();
        assert!((s - 2.0).abs() < 1e-14, "{s}");
        for (a, b) in r.iter().zip(r.iter().rev()) {
            assert!((a.0 + b.0).abs() < 1e-15);
            assert!((a.1 - b.1).abs() < 1e-14);
        }
    }

    #[test]
    fn exact_for_polynomials_up_to_degree_2n_minus_1() {
        // ∫₀¹ x^k dx = 1/(k+1) [calc].
        let r = rule::<POINTS>();
        for k in 0..(2 * POINTS as i32) {
            let got = integrate(&r, 0.0, 1.0, 1, |x| libm::pow(x, f64::from(k)));
            let want = 1.0 / f64::from(k + 1);
            assert!((got - want).abs() < 1e-14, "k = {k}: {got} vs {want}");
        }
        // Degree 2n is not integrated exactly by one panel: the check above can fail.
        let k = 2 * POINTS as i32;
        let got = integrate(&r, 0.0, 1.0, 1, |x| libm::pow(x, f64::from(k)));
        assert!((got - 1.0 / f64::from(k + 1)).abs() > 1e-20);
    }

    #[test]
    fn composite_rule_on_a_smooth_function() {
        // ∫₀^π sin t dt = 2 [calc].
        let r = rule::<POINTS>();
        let got = integrate(&r, 0.0, PI, PANELS, libm::sin);
        assert!((got - 2.0).abs() < 1e-14, "{got}");
    }
}
