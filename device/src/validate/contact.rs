//! `[contact]`: which keys a shape needs and which it does not use, and whether a cone
//! releases. The dimensions themselves (inner below outer, a pad on its disc, a polygon's
//! area and the axis outside it) are the core geometry's to check.

use super::Validator;
use crate::schema::{ContactSpec, DeviceSpec, ShapeSpec};

pub(super) fn check(c: &DeviceSpec, v: &mut Validator) {
    let ct = &c.contact;
    if ct.faces == 0 || ct.faces > 64 {
        v.issue(
            "contact.faces",
            format!("must be within 1 … 64, got {}", ct.faces),
        );
    }
    if ct.shape != ShapeSpec::Button {
        v.unused("contact.button_model", &ct.button_model, ct.shape);
    }
    match ct.shape {
        ShapeSpec::Annulus | ShapeSpec::Sector | ShapeSpec::Cone => radial(ct, v),
        ShapeSpec::Button => button(ct, v),
        ShapeSpec::Polygon => polygon(ct, v),
        ShapeSpec::DrumShoes | ShapeSpec::Band | ShapeSpec::BlockShoes => drum_or_band(ct, v),
    }
    if !ct.shape.is_drum_or_band() {
        v.unused("contact.drum_shoes", &ct.drum_shoes, ct.shape);
        v.unused("contact.block_shoes", &ct.block_shoes, ct.shape);
        v.unused("contact.band", &ct.band, ct.shape);
    }
    if !ct.is_nonlinear_in_mu() {
        v.unused("contact.gain_mu_max", &ct.gain_mu_max, ct.shape);
    }
    if ct.shape != ShapeSpec::Cone {
        v.unused("contact.cone_engagement", &ct.cone_engagement, ct.shape);
    }
    cone_release(c, v);
}

/// Drum shoes or a band: its own table and none of the flat face's keys. The lengths, angles
/// and the locking μ are the core brake models' to check.
fn drum_or_band(ct: &ContactSpec, v: &mut Validator) {
    let shape = ct.shape;
    for (key, value) in [
        ("contact.inner_radius_m", ct.inner_radius_m),
        ("contact.outer_radius_m", ct.outer_radius_m),
        ("contact.sector_angle_deg", ct.sector_angle_deg),
        ("contact.pad_radius_m", ct.pad_radius_m),
        ("contact.pad_centre_radius_m", ct.pad_centre_radius_m),
        ("contact.half_angle_deg", ct.half_angle_deg),
    ] {
        v.unused(key, &value, shape);
    }
    v.unused("contact.vertices_m", &ct.vertices_m, shape);
    let (own, other) = match shape {
        ShapeSpec::Band => (
            ct.band.is_some(),
            ("contact.drum_shoes", ct.drum_shoes.is_some()),
        ),
        _ => (ct.drum_shoes.is_some(), ("contact.band", ct.band.is_some())),
    };
    if !own {
        let table = if shape == ShapeSpec::Band {
            "band"
        } else {
            "drum_shoes"
        };
        v.issue(
            "contact.shape",
            format!("shape '{}' needs [contact.{table}]", shape.name()),
        );
    }
    if other.1 {
        v.issue(other.0, format!("is not used by shape '{}'", shape.name()));
    }
    if let Some(mu) = ct.gain_mu_max {
        v.within("contact.gain_mu_max", mu, 0.05, 2.0);
    }
}

/// Annulus, sector and cone: inner and outer radius, plus the sector angle or the cone angle.
fn radial(ct: &ContactSpec, v: &mut Validator) {
    let shape = ct.shape;
    if let Some(ri) = v.required("contact.inner_radius_m", ct.inner_radius_m, shape) {
        v.non_negative("contact.inner_radius_m", ri);
    }
    if let Some(ro) = v.required("contact.outer_radius_m", ct.outer_radius_m, shape) {
        v.within("contact.outer_radius_m", ro, 1e-4, 10.0);
    }
    v.unused("contact.pad_radius_m", &ct.pad_radius_m, shape);
    v.unused(
        "contact.pad_centre_radius_m",
        &ct.pad_centre_radius_m,
        shape,
    );
    v.unused("contact.vertices_m", &ct.vertices_m, shape);
    if shape == ShapeSpec::Sector {
        if let Some(a) = v.required("contact.sector_angle_deg", ct.sector_angle_deg, shape) {
            v.within("contact.sector_angle_deg", a, 1e-3, 360.0);
        }
    } else {
        v.unused("contact.sector_angle_deg", &ct.sector_angle_deg, shape);
    }
    if shape == ShapeSpec::Cone {
        if let Some(a) = v.required("contact.half_angle_deg", ct.half_angle_deg, shape) {
            v.within("contact.half_angle_deg", a, 1.0, 89.0);
        }
    } else {
        v.unused("contact.half_angle_deg", &ct.half_angle_deg, shape);
    }
}

/// A circular pad: its radius, its centre's radius and which model of r_e.
fn button(ct: &ContactSpec, v: &mut Validator) {
    let shape = ct.shape;
    if ct.button_model.is_none() {
        v.issue(
            "contact.shape",
            "shape 'button' needs contact.button_model (\"published_table\" or \"integrated\")",
        );
    }
    let r = v.required("contact.pad_radius_m", ct.pad_radius_m, shape);
    let e = v.required("contact.pad_centre_radius_m", ct.pad_centre_radius_m, shape);
    if let Some(r) = r {
        v.positive("contact.pad_radius_m", r);
    }
    if let Some(e) = e {
        v.within("contact.pad_centre_radius_m", e, 1e-4, 10.0);
    }
    // The rubbing band e − R … e + R is built from these two; a pad over the axis would give
    // the core a negative inner radius, which it could only name as the disc's.
    if let (Some(r), Some(e)) = (r, e)
        && r >= e
    {
        v.issue(
            "contact.pad_radius_m",
            "must be below pad_centre_radius_m (the pad may not cover the axis)",
        );
    }
    v.unused("contact.inner_radius_m", &ct.inner_radius_m, shape);
    v.unused("contact.outer_radius_m", &ct.outer_radius_m, shape);
    v.unused("contact.sector_angle_deg", &ct.sector_angle_deg, shape);
    v.unused("contact.vertices_m", &ct.vertices_m, shape);
    v.unused("contact.half_angle_deg", &ct.half_angle_deg, shape);
}

/// A flat pad outline: 3 … 32 finite vertices.
fn polygon(ct: &ContactSpec, v: &mut Validator) {
    let shape = ct.shape;
    match &ct.vertices_m {
        None => v.issue("contact.shape", "shape 'polygon' needs contact.vertices_m"),
        Some(vs) => {
            if !(3..=32).contains(&vs.len()) {
                v.issue(
                    "contact.vertices_m",
                    format!("needs 3 … 32 vertices, got {}", vs.len()),
                );
            }
            for (i, p) in vs.iter().enumerate() {
                if !(p[0].is_finite() && p[1].is_finite()) {
                    v.issue(&format!("contact.vertices_m[{i}]"), "must be finite");
                }
            }
        }
    }
    v.unused("contact.inner_radius_m", &ct.inner_radius_m, shape);
    v.unused("contact.outer_radius_m", &ct.outer_radius_m, shape);
    v.unused("contact.sector_angle_deg", &ct.sector_angle_deg, shape);
    v.unused("contact.pad_radius_m", &ct.pad_radius_m, shape);
    v.unused(
        "contact.pad_centre_radius_m",
        &ct.pad_centre_radius_m,
        shape,
    );
    v.unused("contact.half_angle_deg", &ct.half_angle_deg, shape);
}

/// A cone whose half-angle has tan α at or below the static μ self-locks: once engaged it stays
/// engaged with no axial force, so the measured force no longer sets the torque [pub: Shigley,
/// *Mechanical Engineering Design*, ch. 16, cone clutches: the engagement force
/// F = p_a·π·d·(D − d)/2·(sin α + μ cos α) and the release force needs μ cos α < sin α]. Refused.
fn cone_release(c: &DeviceSpec, v: &mut Validator) {
    let (ShapeSpec::Cone, Some(alpha)) = (c.contact.shape, c.contact.half_angle_deg) else {
        return;
    };
    let mu_max = c
        .friction
        .mu
        .values
        .iter()
        .flatten()
        .copied()
        .filter(|m| m.is_finite())
        .fold(0.0f64, f64::max);
    let mu_static = mu_max * c.friction.static_ratio.max(1.0);
    let tan = libm::tan(alpha.to_radians());
    if alpha.is_finite() && mu_static.is_finite() && tan <= mu_static {
        v.issue(
            "contact.half_angle_deg",
            format!(
                "a cone of half-angle {alpha}° self-locks: tan α = {tan:.3} is not above the \
                 largest static μ {mu_static:.3}, so it stays engaged with no clamp force and the \
                 measured force no longer sets the torque; use a half-angle above {:.1}°",
                libm::atan(mu_static).to_degrees()
            ),
        );
    }
}
