//! Fixed-point products of the torque model: n · k · μ · F · r_e and the power |T · v|.
//!
//! The torque is three 32 × 32 → 64-bit products with Q30 intermediates (μ·r_e, then
//! k·μ·r_e), within ½ LSB + F·(k + 1)·2⁻³¹ N·m per face of the exact product of the fixed-point
//! inputs; outside the intermediates' range the 128-bit chain (Q30 · Q30 · Q8 · Q24 = Q92)
//! gives the correctly rounded product. The corrected and the uncorrected torque share the
//! μ·r_e product ([`friction_torque_pair`]).

use crate::units::{Metres, NewtonMetres, Newtons, RadPerSec, Ratio, Watts};
use crate::wide;

/// A fixed-point result and whether it saturated at the limit of its format.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) struct Saturating<T> {
    pub value: T,
    pub saturated: bool,
}

/// Narrow to i32, saturating.
fn narrow(rounded: i128) -> (i32, bool) {
    match i32::try_from(rounded) {
        Ok(bits) => (bits, false),
        Err(_) => (if rounded < 0 { i32::MIN } else { i32::MAX }, true),
    }
}

/// n · k · μ · F · r_e in N·m (positive for positive inputs; sign applied by the caller).
///
/// In 32 × 32 → 64-bit products (one instruction each on a Cortex-M3/M4, one library multiply
/// on a Cortex-M0+): μ·r_e and then k·μ·r_e are rounded to Q30, and F · (k·μ·r_e) is rounded
/// once to the torque format. The two intermediate roundings move the product by at most
/// k·F·2⁻³¹ and F·2⁻³¹ N·m, so per face the result is within ½ LSB + F·(k + 1)·2⁻³¹ of the
/// exact product of the fixed-point inputs (the bound the tests hold it to; at 100 kN and k = 1,
/// 9·10⁻⁵ N·m besides the ½ LSB of 1.2·10⁻⁴). Where μ·r_e or k·μ·r_e leaves the Q30 range
/// (±2 m), the exact 128-bit chain takes over.
pub(crate) fn friction_torque(
    faces: u8,
    correction: Ratio,
    mu: Ratio,
    force: Newtons,
    lever_arm: Metres,
) -> Saturating<NewtonMetres> {
    mu_arm(mu, lever_arm)
        .and_then(|arm| corrected_torque(faces, correction, arm, force))
        .unwrap_or_else(|| exact_friction_torque(faces, correction, mu, force, lever_arm))
}

/// The torque with the correction k and without it (k = 1), from one μ·r_e product: each the
/// very bits [`friction_torque`] gives.
pub(crate) fn friction_torque_pair(
    faces: u8,
    correction: Ratio,
    mu: Ratio,
    force: Newtons,
    lever_arm: Metres,
) -> (Saturating<NewtonMetres>, Saturating<NewtonMetres>) {
    if let Some(arm) = mu_arm(mu, lever_arm)
        && let Some(corrected) = corrected_torque(faces, correction, arm, force)
    {
        // k = 1 (2³⁰) leaves μ·r_e unchanged in `corrected_torque`: the product with F alone.
        return (corrected, force_times(faces, arm, force));
    }
    (
        friction_torque(faces, correction, mu, force, lever_arm),
        friction_torque(faces, Ratio::ONE, mu, force, lever_arm),
    )
}

/// μ·r_e in Q30 metres (Q30 · Q24 = Q54, rounded), when it fits i32.
#[inline]
fn mu_arm(mu: Ratio, lever_arm: Metres) -> Option<i32> {
    i32::try_from(rounded_shr(
        i64::from(mu.to_bits()) * i64::from(lever_arm.to_bits()),
        24,
    ))
    .ok()
}

/// n · F · (k · μr) from μr in Q30 metres, when k·μr (rounded to Q30) fits i32.
#[inline]
fn corrected_torque(
    faces: u8,
    correction: Ratio,
    mu_arm: i32,
    force: Newtons,
) -> Option<Saturating<NewtonMetres>> {
    let arm = rounded_shr(i64::from(correction.to_bits()) * i64::from(mu_arm), 30);
    Some(force_times(faces, i32::try_from(arm).ok()?, force))
}

/// n · F · a for a in Q30 metres: Q8 · Q30 = Q38 (< 2⁶²), to Q12 (< 2³⁶); · 255 < 2⁴⁴.
#[inline]
fn force_times(faces: u8, arm: i32, force: Newtons) -> Saturating<NewtonMetres> {
    let per_face = rounded_shr(i64::from(force.to_bits()) * i64::from(arm), 26);
    saturated(i128::from(per_face * i64::from(faces)))
}

/// x / 2^s rounded to nearest (halves up), for |x| < 2⁶² and 1 ≤ s ≤ 61.
fn rounded_shr(x: i64, s: u32) -> i64 {
    (x + (1 << (s - 1))) >> s
}

fn saturated(rounded: i128) -> Saturating<NewtonMetres> {
    let (bits, saturated) = narrow(rounded);
    Saturating {
        value: NewtonMetres::from_bits(bits),
        saturated,
    }
}

/// n · k · μ · F · r_e correctly rounded, for any input bits: the chain in 128-bit integers on
/// the raw bits (Q30 · Q30 · Q8 · Q24 = Q92, below 2¹²⁴), rounded once to the torque format.
fn exact_friction_torque(
    faces: u8,
    correction: Ratio,
    mu: Ratio,
    force: Newtons,
    lever_arm: Metres,
) -> Saturating<NewtonMetres> {
    // Each factor < 2³¹ in magnitude, so each pair's product is exact in i64 (< 2⁶²) and the
    // whole product < 2¹²⁴ in i128: one 64 × 64-bit widening multiply instead of a chain of
    // 128-bit ones (the same value, far less code on a 32-bit core).
    let ratios = i64::from(correction.to_bits()) * i64::from(mu.to_bits());
    let moment = i64::from(force.to_bits()) * i64::from(lever_arm.to_bits());
    let q92 = wide::mul_i64(ratios, moment);
    // To Q12 (NewtonMetres) first, then the face count: |Q12 value| < 2⁴⁴, · 255 < 2⁵², so
    // both fit i64.
    let per_face = i64::try_from(q92.saturating_add(1i128 << 79) >> 80).unwrap_or(i64::MAX);
    saturated(i128::from(per_face.saturating_mul(i64::from(faces))))
}

/// μ · k (Q30 · Q30 → Q30), rounded down and saturated: the very value of
/// `Ratio::saturating_mul`, which widens to an overflow-checked 64-bit multiply (on Cortex-M0
/// four library multiplies); here one exact 32 × 32 → 64-bit product (one library multiply
/// there). ⌊a·b / 2³⁰⌋ lies within i32 exactly when `a · (b·2²)` (the `fixed` crate's form)
/// does not overflow i64, and an overflow has the sign of the product.
pub(crate) fn ratio_product(a: Ratio, b: Ratio) -> Ratio {
    let q30 = (i64::from(a.to_bits()) * i64::from(b.to_bits())) >> 30;
    Ratio::from_bits(i32::try_from(q30).unwrap_or(if q30 < 0 { i32::MIN } else { i32::MAX }))
}

/// |T · v| in W, the power dissipated in the contact.
pub(crate) fn dissipated_power(torque: NewtonMetres, slip_speed: RadPerSec) -> Saturating<Watts> {
    // Q12 · Q16 = Q28 → Watts is Q32: shift left by 4; |product| < 2⁶² is exact in i64, and
    // shifted it is below 2⁶⁶, so it widens to u128 for the shift.
    let q28 = i64::from(torque.to_bits()) * i64::from(slip_speed.to_bits());
    let q32 = u128::from(q28.unsigned_abs()) << 4;
    match i64::try_from(q32) {
        Ok(bits) => Saturating {
            value: Watts::from_bits(bits),
            saturated: false,
        },
        Err(_) => Saturating {
            value: Watts::MAX,
            saturated: true,
        },
    }
}

#[cfg(test)]
#[allow(clippy::unwrap_used)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    #[test]
    fn annulus_check_vector() {
        // Annulus check vector [calc, r_uw = (Ro+Ri)/2]: μ = 0.30, F = 10 kN,
        // r_e = 80 mm (uniform wear)
        // → 240.00 N·m per face, 1440 N·m on 6 faces (Shigley ch. 16, T = N·μ·F·r_e [pub]).
        let t = friction_torque(
            6,
            Ratio::ONE,
            Ratio::from_num(0.30),
            Newtons::from_num(10_000),
            Metres::from_num(0.080),
        );
        assert!(!t.saturated);
        let v: f64 = t.value.to_num();
        assert!((v - 1440.0).abs() < 1e-3, "{v}");
    }

    #[test]
    fn ratio_product_edges() {
        // Reference: the `fixed` crate's saturating multiply.
        let edges = [
            i32::MIN,
            i32::MIN + 1,
            -(1 << 30),
            -1,
            0,
            1,
            1 << 30,
            1 << 29,
            i32::MAX,
        ];
        for a in edges.map(Ratio::from_bits) {
            for b in edges.map(Ratio::from_bits) {
                assert_eq!(ratio_product(a, b), a.saturating_mul(b), "{a} {b}");
            }
        }
    }

    #[test]
    fn saturates_and_says_so() {
        let t = friction_torque(255, Ratio::MAX, Ratio::MAX, Newtons::MAX, Metres::MAX);
        assert!(t.saturated);
        assert_eq!(t.value, NewtonMetres::MAX);
        // 2¹⁹ N·m · 2¹⁵ rad/s exceeds the 2³¹ W range; the envelope corner does not.
        let p = dissipated_power(NewtonMetres::MAX, RadPerSec::MIN);
        assert!(p.saturated);
        assert_eq!(p.value, Watts::MAX);
        let corner = dissipated_power(NewtonMetres::from_num(-50_000), RadPerSec::from_num(2000));
        assert!(!corner.saturated);
        assert_eq!(corner.value, Watts::from_num(100_000_000));
    }

    proptest! {
        // The exact chain gives the very bits of the plain 128-bit chain, over all inputs; the
        // fast form stays within its stated bound of it (½ LSB + F·(k + 1)·2⁻³¹ per face: in
        // Q92 bits, F·(k + 1) in Q8 · Q30 bits times 2²³, plus the ½ LSB of 2⁷⁹, doubled), and
        // the pair gives the very bits of two single calls.
        #[test]
        fn same_bits_as_the_128_bit_chain(
            k in any::<i32>(), mu in any::<i32>(), f in any::<i32>(), r in any::<i32>(),
            faces in any::<u8>(), t in any::<i32>(), v in any::<i32>(),
        ) {
            let chain = i128::from(k) * i128::from(mu) * i128::from(f) * i128::from(r);
            let per_face = chain.saturating_add(1i128 << 79) >> 80;
            let (bits, saturated) = narrow(per_face.saturating_mul(i128::from(faces)));
            let (kr, mur, fr, rr) = (Ratio::from_bits(k), Ratio::from_bits(mu), Newtons::from_bits(f), Metres::from_bits(r));
            let exact = exact_friction_torque(faces, kr, mur, fr, rr);
            prop_assert_eq!(exact, Saturating { value: NewtonMetres::from_bits(bits), saturated });
            let fast = friction_torque(faces, kr, mur, fr, rr);
            if !saturated && !fast.saturated {
                let per_face_bound = ((i128::from(f).abs() * (i128::from(k).abs() + (1 << 30))) << 23)
                    + (1i128 << 80);
                let got = i128::from(fast.value.to_bits()) << 80;
                let want = chain * i128::from(faces);
                prop_assert!((got - want).abs() <= i128::from(faces) * per_face_bound, "{:?} vs {:?}", fast, exact);
            }
            let pair = friction_torque_pair(faces, kr, mur, fr, rr);
            prop_assert_eq!(pair, (fast, friction_torque(faces, Ratio::ONE, mur, fr, rr)));
            let q32 = (i128::from(t) * i128::from(v)).unsigned_abs() << 4;
            let p = dissipated_power(NewtonMetres::from_bits(t), RadPerSec::from_bits(v));
            prop_assert_eq!(i64::try_from(q32).ok(), (!p.saturated).then_some(p.value.to_bits()));
        }

        // Reference: the `fixed` crate's saturating multiply, over all inputs.
        #[test]
        fn ratio_product_same_as_fixed(a in any::<i32>(), b in any::<i32>()) {
            let (a, b) = (Ratio::from_bits(a), Ratio::from_bits(b));
            prop_assert_eq!(ratio_product(a, b), a.saturating_mul(b));
        }

        // Within ½ LSB + F·(k + 1)·2⁻³¹ (per face) of the f64 product of the same fixed-point
        // inputs.
        #[test]
        fn product_is_correctly_rounded(
            mu in 0.0f64..1.0, k in 0.5f64..1.5, f in 0.0f64..200_000.0, r in 0.005f64..1.5,
            faces in 1u8..=16,
        ) {
            let (mu, k, f, r) = (Ratio::from_num(mu), Ratio::from_num(k), Newtons::from_num(f), Metres::from_num(r));
            let t = friction_torque(faces, k, mu, f, r);
            let exact = f64::from(faces) * k.to_num::<f64>() * mu.to_num::<f64>() * f.to_num::<f64>() * r.to_num::<f64>();
            let lsb = 1.0 / 4096.0;
            if exact < 500_000.0 {
                prop_assert!(!t.saturated);
                let extra = f.to_num::<f64>() * (k.to_num::<f64>() + 1.0) * 2f64.powi(-31);
                let bound = f64::from(faces) * (0.5 * lsb + extra);
                prop_assert!((t.value.to_num::<f64>() - exact).abs() <= bound + 1e-9);
            }
        }
    }
}
