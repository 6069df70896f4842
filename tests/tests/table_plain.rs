//! The core's division-free table lookups against the plain dividing lookups
//! (`clampwise_tests::plain::table`), bit for bit: random strictly increasing axes (spans of
//! every bit length, powers of two among them), random values and inputs on, next to and
//! between breakpoints and far outside. The plain lookups follow the interpolation formula
//! [calc: linear interpolation, ⌊(x − x₀)·2³¹/(x₁ − x₀)⌋ fraction, rounded linear step].
#![allow(clippy::unwrap_used, clippy::indexing_slicing)]

use clampwise_core::table::{Table1, Table2};
use clampwise_tests::plain;
use fixed::FixedI32;
use fixed::types::extra::{LeEqU32, U8, U16, U24};
use proptest::prelude::*;

/// A strictly increasing axis: either any distinct i32 values (spans up to 2³² − 1) or a
/// start plus increments of random bit length (short spans, powers of two among them).
fn axis_strategy<const N: usize>() -> impl Strategy<Value = [i32; N]> {
    let wide = prop::collection::btree_set(any::<i32>(), N).prop_map(|set| {
        let v: Vec<i32> = set.into_iter().collect();
        <[i32; N]>::try_from(v).unwrap()
    });
    let narrow = (
        any::<i32>(),
        prop::collection::vec((0u32..=29, any::<u32>(), any::<bool>()), N),
    )
        .prop_map(|(start, steps)| {
            let mut x = [0i64; N];
            let mut at = i64::from(start);
            for (o, (bits, raw, exact)) in x.iter_mut().zip(steps) {
                *o = at;
                let span = 1i64 << bits;
                at += if exact {
                    span
                } else {
                    1 + i64::from(raw) % span
                };
            }
            // Shift into i32 range (the total span is below 2³²).
            let excess = (x[N - 1] - i64::from(i32::MAX)).max(0);
            x.map(|v| i32::try_from(v - excess).unwrap())
        });
    prop_oneof![wide, narrow]
}

/// How to choose an input for an axis (kind, raw value, small offset).
type Pick = (u8, u32, i8);

/// An input for an axis: anywhere, on or next to a breakpoint, or inside a segment.
fn input_for(axis: &[i32], pick: Pick) -> i32 {
    let (kind, raw, offset) = pick;
    let i = raw as usize % axis.len();
    match kind % 3 {
        0 => raw.cast_signed(),
        1 => axis[i].saturating_add(i32::from(offset % 3)),
        _ => {
            let (a, b) = (axis[i], axis[(i + 1).min(axis.len() - 1)]);
            let span = (i64::from(b) - i64::from(a)).max(1);
            i32::try_from(i64::from(a) + i64::from(raw) % span).unwrap()
        }
    }
}

fn fx<F: LeEqU32, const N: usize>(bits: [i32; N]) -> [FixedI32<F>; N] {
    bits.map(FixedI32::from_bits)
}

/// The division-free lookups against the plain dividing lookups, bit for bit, on random tables
/// (flat in x or not) and inputs; both lookups of one search agree with the separate lookups.
fn check_table2<const NX: usize, const NY: usize>(
    xs: [i32; NX],
    ys: [i32; NY],
    z: [[i32; NY]; NX],
    flat: bool,
    picks: &[(Pick, Pick)],
) {
    let z = if flat { [z[0]; NX] } else { z };
    let t = Table2::<U8, U16, U24, NX, NY>::from_bits(fx(xs), fx(ys), z.map(fx)).unwrap();
    for &(px, py) in picks {
        let (x, y) = (
            FixedI32::<U8>::from_bits(input_for(&xs, px)),
            FixedI32::<U16>::from_bits(input_for(&ys, py)),
        );
        let want = plain::table::lookup2(
            t.x_breakpoints(),
            t.y_breakpoints(),
            &t.rows().collect::<Vec<_>>(),
            x,
            y,
        );
        let got = t.lookup(x, y);
        assert_eq!((got.value.to_bits(), got.clamped), want, "x={x:?} y={y:?}");
        let (running, standstill) = t.lookup_with_first_y(x, y);
        assert_eq!(running, got);
        assert_eq!(standstill, t.lookup(x, t.y_breakpoints()[0]));
    }
}

fn picks() -> impl Strategy<Value = Vec<(Pick, Pick)>> {
    prop::collection::vec(
        (
            (any::<u8>(), any::<u32>(), any::<i8>()),
            (any::<u8>(), any::<u32>(), any::<i8>()),
        ),
        32,
    )
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(2000))]

    #[test]
    fn table1_matches_plain_lookup(
        xs in axis_strategy::<5>(),
        ys in any::<[i32; 5]>(),
        picks in prop::collection::vec((any::<u8>(), any::<u32>(), any::<i8>()), 32),
    ) {
        let t = Table1::<U16, U24, 5>::from_bits(fx(xs), fx(ys)).unwrap();
        for pick in picks {
            let x = FixedI32::<U16>::from_bits(input_for(&xs, pick));
            let got = t.lookup(x);
            let want = plain::table::lookup1(t.breakpoints(), t.values(), x);
            prop_assert_eq!((got.value.to_bits(), got.clamped), want);
        }
    }

    #[test]
    fn table2_matches_plain_lookup(
        xs in axis_strategy::<4>(),
        ys in axis_strategy::<3>(),
        z in any::<[[i32; 3]; 4]>(),
        flat in any::<bool>(),
        picks in picks(),
    ) {
        check_table2(xs, ys, z, flat, &picks);
    }

    #[test]
    fn wide_and_degenerate_tables_match_plain_lookup(
        xs in axis_strategy::<6>(),
        ys in axis_strategy::<5>(),
        z in any::<[[i32; 5]; 6]>(),
        flat in any::<bool>(),
        picks in picks(),
    ) {
        check_table2(xs, ys, z, flat, &picks);
        check_table2([xs[0]], ys, [z[0]], false, &picks);
        check_table2(xs, [ys[0]], z.map(|r| [r[0]]), flat, &picks);
        check_table2([xs[0], xs[5]], [ys[0], ys[4]], [[z[0][0], z[0][4]], [z[5][0], z[5][4]]], flat, &picks);
        check_table2([xs[0]], [ys[0]], [[z[0][0]]], false, &picks);
    }
}
