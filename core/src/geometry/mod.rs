//! Contact geometry → effective friction radius: the torque per unit μ·F of one friction face.
//!
//! This module *builds* tables: it works in f64 (with `libm`, so it stays `no_std` and
//! allocation-free) and is never on the per-sample path. Its output, the friction-radius table
//! ([`RadiusTable`], built by [`build_radius_table`]), is fixed point.
//!
//! ```text
//! Disc (rubbing band) ─┐
//! shape: Annulus | SectorPad | ButtonPad | PolygonPad ─► PadIntegrals (A, ∫r dA, ∫dA/r)
//!                                                    ─► EffectiveRadii (r_up, r_uw)
//! bedding b ∈ [0,1]  ─► r_e = (1 − b)·r_up + b·r_uw
//! Contact (shape, faces n, cone α?) ─► lever arm r_e / sin α ─► RadiusTable(F, b)
//! estimator: torque = n · μ · F · RadiusTable(F, b)
//! ```
//!
//! | contact | uniform pressure | uniform wear | how |
//! |---|---|---|---|
//! | [`Annulus`], solid disc | (2/3)(Ro³−Ri³)/(Ro²−Ri²); 2R/3 | (Ro+Ri)/2; R/2 | closed form [pub: Shigley ch. 16] |
//! | [`SectorPad`], any angle in (0, 2π] | as the annulus | as the annulus | closed-form integrals; the angle cancels |
//! | [`ButtonPad`], [`ButtonModel::PublishedTable`] | δ·e | δ·e | published table \[mem\], linear between rows |
//! | [`ButtonPad`], [`ButtonModel::Integrated`] | ∫r dA / A | A / ∫dA/r | Gauss–Legendre, ≤ 2·10⁻¹³ |
//! | [`PolygonPad`], simple, convex or not | ∫r dA / A | A / ∫dA/r | Green's theorem, closed form per edge |
//! | cone of half-angle α ([`ConeAngle`]) | r_e / sin α | r_e / sin α | [pub: Shigley ch. 16] |
//!
//! The published table's r_e lies below the integrated model's at R/e = 0.1…0.5 by 1.6–3.3 %
//! for bedded linings and 1.8–9.1 % for new ones (see [`button`]'s docs); they are kept as
//! separate models and never tuned to agree.
//!
//! The fixed-point friction-radius table reproduces [`Contact::lever_arm`] within 9.7·10⁻⁶
//! relative over radii of 10 mm to 1 m, all bedding values and clamp forces to 200 kN
//! (measured; see [`radius_table`]).
//!
//! Every constructor validates its inputs and returns a [`GeometryError`] naming the offending
//! parameter; nothing here panics.
//!
//! ```
//! use clampwise_core::geometry::{build_radius_table, Contact, Disc, SectorPad};
//! use clampwise_core::units::{Newtons, Ratio};
//!
//! // A fictional winch holding brake: one caliper, two 60° sector pads on a 300 mm disc.
//! let disc = Disc::new(0.090, 0.150)?;
//! let pad = SectorPad::new(&disc, 0.095, 0.145, 60f64.to_radians())?;
//! let brake = Contact::new(pad, 2, None)?;
//! assert!((brake.effective_radius(1.0)? - 0.120).abs() < 1e-12);
//! let table = build_radius_table(&brake, &[0.0, 40_000.0], &[0.0, 1.0])?;
//! let r = table.lookup(Newtons::from_num(12_000), Ratio::from_num(1)).value;
//! assert!((r.to_num::<f64>() - 0.120).abs() < 1e-7);
//! # Ok::<(), clampwise_core::geometry::GeometryError>(())
//! ```

pub mod annulus;
pub mod brake;
pub mod button;
pub mod cone;
pub mod contact;
pub mod disc;
pub mod error;
pub mod polygon;
pub mod pressure;
mod quadrature;
pub mod radius_table;
pub mod sector;

pub use annulus::Annulus;
pub use button::{ButtonModel, ButtonPad, PUBLISHED_BUTTON_TABLE, published_delta};
pub use cone::ConeAngle;
pub use contact::{Contact, Shape};
pub use disc::Disc;
pub use error::{GeometryError, Parameter};
pub use polygon::{Point, PolygonPad};
pub use pressure::{EffectiveRadii, PadIntegrals, PressureModel};
pub use radius_table::{RadiusTable, build_radius_table, build_radius_table_from_slices};
pub use sector::SectorPad;
