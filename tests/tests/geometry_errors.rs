//! Every invalid geometry gives its own typed error, whose message names the offending
//! parameter; none panics. One test per case.
#![allow(clippy::indexing_slicing, clippy::unwrap_used)]

use std::f64::consts::{FRAC_PI_2, TAU};

use clampwise_core::geometry::{
    Annulus, ButtonModel, ButtonPad, Contact, Disc, GeometryError, Parameter, Point, PolygonPad,
    SectorPad, build_radius_table,
};
use clampwise_core::table::{Axis, TableError};

fn disc() -> Disc {
    Disc::new(0.05, 0.20).unwrap()
}

fn face() -> Annulus {
    Annulus::new(0.1, 0.2).unwrap()
}

/// The error and a fragment its message must contain.
fn check<T: std::fmt::Debug>(r: Result<T, GeometryError>, want: GeometryError, text: &str) {
    let e = r.unwrap_err();
    assert_eq!(e, want);
    let msg = e.to_string();
    assert!(msg.contains(text), "message {msg:?} should name {text:?}");
}

fn square(x0: f64, y0: f64, side: f64) -> [Point; 4] {
    [
        Point::new(x0, y0),
        Point::new(x0 + side, y0),
        Point::new(x0 + side, y0 + side),
        Point::new(x0, y0 + side),
    ]
}

#[test]
fn disc_inner_not_below_outer() {
    check(
        Disc::new(0.2, 0.2),
        GeometryError::InnerNotBelowOuter {
            inner: Parameter::DiscInnerRadius,
            inner_m: 0.2,
            outer: Parameter::DiscOuterRadius,
            outer_m: 0.2,
        },
        "disc.inner_radius_m",
    );
}

#[test]
fn annulus_inner_not_below_outer() {
    check(
        Annulus::new(0.3, 0.2),
        GeometryError::InnerNotBelowOuter {
            inner: Parameter::InnerRadius,
            inner_m: 0.3,
            outer: Parameter::OuterRadius,
            outer_m: 0.2,
        },
        "outer_radius_m",
    );
}

#[test]
fn sector_inner_not_below_outer() {
    check(
        SectorPad::new(&disc(), 0.15, 0.12, 1.0),
        GeometryError::InnerNotBelowOuter {
            inner: Parameter::InnerRadius,
            inner_m: 0.15,
            outer: Parameter::OuterRadius,
            outer_m: 0.12,
        },
        "inner_radius_m",
    );
}

#[test]
fn negative_radius() {
    check(
        Disc::new(-0.01, 0.2),
        GeometryError::Negative {
            parameter: Parameter::DiscInnerRadius,
            value: -0.01,
        },
        "disc.inner_radius_m",
    );
}

#[test]
fn negative_button_radius() {
    check(
        ButtonPad::new(&disc(), -0.01, 0.12, ButtonModel::Integrated),
        GeometryError::Negative {
            parameter: Parameter::ButtonRadius,
            value: -0.01,
        },
        "radius_m",
    );
}

#[test]
fn negative_force_breakpoint() {
    let c = Contact::new(face(), 2, None).unwrap();
    check(
        build_radius_table(&c, &[-1.0, 10.0], &[0.0, 1.0]),
        GeometryError::Negative {
            parameter: Parameter::ForceBreakpoint(0),
            value: -1.0,
        },
        "clamp_force_breakpoints_n[0]",
    );
}

#[test]
fn non_finite_radius() {
    check(
        Annulus::new(0.1, f64::INFINITY),
        GeometryError::NotFinite {
            parameter: Parameter::OuterRadius,
        },
        "outer_radius_m",
    );
}

#[test]
fn non_finite_button_centre() {
    check(
        ButtonPad::new(&disc(), 0.02, f64::NAN, ButtonModel::Integrated),
        GeometryError::NotFinite {
            parameter: Parameter::ButtonCentreRadius,
        },
        "centre_radius_m",
    );
}

#[test]
fn non_finite_vertex() {
    let mut v = square(0.1, 0.0, 0.02);
    v[2].y_m = f64::NAN;
    check(
        PolygonPad::new(&disc(), &v),
        GeometryError::NotFinite {
            parameter: Parameter::VertexY(2),
        },
        "vertices[2].y_m",
    );
}

#[test]
fn non_finite_sector_angle() {
    check(
        SectorPad::new(&disc(), 0.1, 0.15, f64::NAN),
        GeometryError::NotFinite {
            parameter: Parameter::SectorAngle,
        },
        "angle_rad",
    );
}

#[test]
fn non_finite_bedding() {
    let c = Contact::new(face(), 1, None).unwrap();
    check(
        c.effective_radius(f64::NAN),
        GeometryError::NotFinite {
            parameter: Parameter::Bedding,
        },
        "bedding",
    );
}

#[test]
fn sector_leaves_disc_outside() {
    check(
        SectorPad::new(&disc(), 0.1, 0.21, 1.0),
        GeometryError::PadLeavesDisc {
            parameter: Parameter::OuterRadius,
            radius_m: 0.21,
            disc_inner_radius_m: 0.05,
            disc_outer_radius_m: 0.20,
        },
        "outer_radius_m",
    );
}

#[test]
fn sector_leaves_disc_inside() {
    check(
        SectorPad::new(&disc(), 0.04, 0.15, 1.0),
        GeometryError::PadLeavesDisc {
            parameter: Parameter::InnerRadius,
            radius_m: 0.04,
            disc_inner_radius_m: 0.05,
            disc_outer_radius_m: 0.20,
        },
        "rubbing band",
    );
}

#[test]
fn button_leaves_disc() {
    let e = ButtonPad::new(&disc(), 0.04, 0.17, ButtonModel::Integrated).unwrap_err();
    assert!(matches!(
        e,
        GeometryError::PadLeavesDisc {
            parameter: Parameter::ButtonRadius,
            radius_m,
            ..
        } if (radius_m - 0.21).abs() < 1e-15
    ));
    assert!(e.to_string().contains("radius_m"));
}

#[test]
fn polygon_vertex_leaves_disc() {
    let v = [
        Point::new(0.16, 0.0),
        Point::new(0.21, 0.0),
        Point::new(0.16, 0.05),
    ];
    check(
        PolygonPad::new(&disc(), &v),
        GeometryError::PadLeavesDisc {
            parameter: Parameter::Vertex(1),
            radius_m: 0.21,
            disc_inner_radius_m: 0.05,
            disc_outer_radius_m: 0.20,
        },
        "vertices[1]",
    );
}

#[test]
fn polygon_edge_crosses_the_hole() {
    // Every vertex lies on the band, but edge 2 (back to the first vertex) passes 8 mm from the
    // axis, through the hole.
    let v = [
        Point::new(0.06, -0.03),
        Point::new(0.10, 0.15),
        Point::new(-0.06, 0.05),
    ];
    let e = PolygonPad::new(&disc(), &v).unwrap_err();
    assert!(
        matches!(
            e,
            GeometryError::PadLeavesDisc {
                parameter: Parameter::Edge(2),
                radius_m,
                ..
            } if radius_m < 0.01
        ),
        "{e:?}"
    );
    assert!(e.to_string().contains("edge 2"));
}

#[test]
fn polygon_covers_the_hole() {
    let v = square(-0.1, -0.1, 0.2);
    check(
        PolygonPad::new(&disc(), &v),
        GeometryError::PadLeavesDisc {
            parameter: Parameter::Vertices,
            radius_m: 0.0,
            disc_inner_radius_m: 0.05,
            disc_outer_radius_m: 0.20,
        },
        "vertices",
    );
}

#[test]
fn sector_angle_zero() {
    check(
        SectorPad::new(&disc(), 0.1, 0.15, 0.0),
        GeometryError::SectorAngleOutOfRange { angle_rad: 0.0 },
        "angle_rad",
    );
}

#[test]
fn sector_angle_negative() {
    check(
        SectorPad::new(&disc(), 0.1, 0.15, -0.5),
        GeometryError::SectorAngleOutOfRange { angle_rad: -0.5 },
        "(0, 2π]",
    );
}

#[test]
fn sector_angle_beyond_full_turn() {
    let a = TAU * (1.0 + 1e-12);
    check(
        SectorPad::new(&disc(), 0.1, 0.15, a),
        GeometryError::SectorAngleOutOfRange { angle_rad: a },
        "angle_rad",
    );
    // 2π itself is allowed.
    assert!(SectorPad::new(&disc(), 0.1, 0.15, TAU).is_ok());
}

#[test]
fn polygon_self_intersecting() {
    let bow_tie = [
        Point::new(0.10, 0.00),
        Point::new(0.15, 0.05),
        Point::new(0.15, 0.00),
        Point::new(0.10, 0.06),
    ];
    check(
        PolygonPad::new(&disc(), &bow_tie),
        GeometryError::SelfIntersecting {
            first_edge: 0,
            second_edge: 2,
        },
        "edge 0",
    );
}

#[test]
fn polygon_too_few_vertices() {
    let v = [Point::new(0.1, 0.0), Point::new(0.15, 0.0)];
    check(
        PolygonPad::new(&disc(), &v),
        GeometryError::TooFewVertices { count: 2 },
        "vertices",
    );
}

#[test]
fn polygon_zero_area() {
    let v = [
        Point::new(0.10, 0.0),
        Point::new(0.12, 0.01),
        Point::new(0.16, 0.03),
    ];
    check(
        PolygonPad::new(&disc(), &v),
        GeometryError::ZeroArea {
            parameter: Parameter::Vertices,
        },
        "no area",
    );
}

#[test]
fn polygon_repeated_vertex() {
    let s = square(0.1, 0.0, 0.02);
    let v = [s[0], s[1], s[1], s[2], s[3]];
    check(
        PolygonPad::new(&disc(), &v),
        GeometryError::RepeatedVertex { index: 2 },
        "vertices[2]",
    );
    // Closing the loop by repeating the first vertex is reported too.
    let closed = [s[0], s[1], s[2], s[3], s[0]];
    assert_eq!(
        PolygonPad::new(&disc(), &closed).unwrap_err(),
        GeometryError::RepeatedVertex { index: 0 }
    );
}

#[test]
fn button_zero_radius() {
    check(
        ButtonPad::new(&disc(), 0.0, 0.1, ButtonModel::Integrated),
        GeometryError::ZeroArea {
            parameter: Parameter::ButtonRadius,
        },
        "radius_m",
    );
}

#[test]
fn button_beyond_published_table() {
    check(
        ButtonPad::new(&disc(), 0.06, 0.11, ButtonModel::PublishedTable),
        GeometryError::OutsidePublishedTable { ratio: 0.06 / 0.11 },
        "0 ..= 0.5",
    );
    // The integrated model covers it.
    assert!(ButtonPad::new(&disc(), 0.06, 0.11, ButtonModel::Integrated).is_ok());
}

#[test]
fn cone_angle_zero() {
    check(
        Contact::new(face(), 1, Some(0.0)),
        GeometryError::ConeAngleOutOfRange {
            half_angle_rad: 0.0,
        },
        "cone_half_angle_rad",
    );
}

#[test]
fn cone_angle_right_angle() {
    check(
        Contact::new(face(), 1, Some(FRAC_PI_2)),
        GeometryError::ConeAngleOutOfRange {
            half_angle_rad: FRAC_PI_2,
        },
        "cone_half_angle_rad",
    );
}

#[test]
fn cone_angle_negative_or_obtuse() {
    for a in [-0.1, 2.0] {
        check(
            Contact::new(face(), 1, Some(a)),
            GeometryError::ConeAngleOutOfRange { half_angle_rad: a },
            "π/2",
        );
    }
}

#[test]
fn cone_angle_not_finite() {
    check(
        Contact::new(face(), 1, Some(f64::NAN)),
        GeometryError::NotFinite {
            parameter: Parameter::ConeHalfAngle,
        },
        "cone_half_angle_rad",
    );
}

#[test]
fn bedding_above_one() {
    let c = Contact::new(face(), 1, None).unwrap();
    check(
        c.lever_arm(1.01),
        GeometryError::BeddingOutOfRange {
            parameter: Parameter::Bedding,
            value: 1.01,
        },
        "[0, 1]",
    );
}

#[test]
fn bedding_below_zero() {
    let c = Contact::new(face(), 1, None).unwrap();
    check(
        c.effective_radius(-0.2),
        GeometryError::BeddingOutOfRange {
            parameter: Parameter::Bedding,
            value: -0.2,
        },
        "bedding",
    );
}

#[test]
fn bedding_breakpoint_out_of_range() {
    let c = Contact::new(face(), 1, None).unwrap();
    check(
        build_radius_table(&c, &[0.0, 1.0], &[0.0, 0.5, 1.5]),
        GeometryError::BeddingOutOfRange {
            parameter: Parameter::BeddingBreakpoint(2),
            value: 1.5,
        },
        "bedding_breakpoints[2]",
    );
}

#[test]
fn zero_faces() {
    check(
        Contact::new(face(), 0, None),
        GeometryError::ZeroFaces,
        "faces",
    );
}

#[test]
fn table_breakpoints_not_increasing() {
    let c = Contact::new(face(), 1, None).unwrap();
    check(
        build_radius_table(&c, &[0.0, 5.0, 5.0], &[0.0, 1.0]),
        GeometryError::Table(TableError::NotIncreasing {
            axis: Axis::X,
            index: 2,
        }),
        "friction-radius table",
    );
}

#[test]
fn table_lever_arm_out_of_range() {
    // A 1 m face on a 0.1° cone: r_e / sin α ≈ 430 m, beyond I8F24's 128 m.
    let c = Contact::new(
        Annulus::new(0.5, 1.0).unwrap(),
        1,
        Some(0.1f64.to_radians()),
    )
    .unwrap();
    check(
        build_radius_table(&c, &[0.0, 1.0], &[0.0, 1.0]),
        GeometryError::Table(TableError::NotRepresentable {
            axis: None,
            index: 0,
        }),
        "out of range",
    );
}
