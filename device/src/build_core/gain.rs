//! A drum or band contact: its torque per unit actuating force g(μ) from the core's brake
//! models (`clampwise_core::geometry::brake`), and the table the step looks it up in, the
//! equivalent lever arm r(F, μ) = g(μ)/μ over clamp force × μ.
//!
//! The μ breakpoints run from 0 to the table's end, [`GAIN_POINTS`] of them, closer together
//! towards the end, where a self-energising contact's g curves most. The end is
//! `contact.gain_mu_max`, by default 90 % of the locking μ (at most 1.0): the estimate flags
//! `SELF_LOCKING` when μ within its tolerance passes it. Between breakpoints the step
//! interpolates linearly; the largest relative difference from the model, found here by
//! sampling every segment, is added to the radius tolerance so the ± covers it.

use clampwise_core::geometry::ConeAngle;
use clampwise_core::geometry::brake::{
    BlockGeometry, BlockShoe, BrakeError, BrakeParameter, ConeEngagement, ConePhase,
    DifferentialBand, LeverEnd, Mounting, PivotedShoe, ShoeAction, ShoeGeometry, ShoePair,
    SimpleBand, TightEndMoment, TorqueGain,
};

use super::contact::{geometry_error, with_contact};
use super::{BuildError, RadiusTable};
use crate::schema::{
    BandKindSpec, BandSpec, BlockShoesSpec, ConePhaseSpec, ContactSpec, DrumShoesSpec,
    LeverEndSpec, MountingSpec, ShapeSpec, ShoeActionSpec, TightEndSpec,
};

/// μ breakpoints of a gain table (within the host's capacity of the radius table's second
/// axis).
pub const GAIN_POINTS: usize = 16;

/// Largest equivalent lever arm a gain table holds, m: below the 128 m of the core's I8F24
/// lever-arm format, with room for the interpolation.
pub const LEVER_ARM_MAX_M: f64 = 120.0;

/// Samples per table segment when the interpolation error is measured.
const SAMPLES_PER_SEGMENT: usize = 64;

/// The torque model of a drum or band contact.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum GainModel {
    /// One pivoted shoe.
    Shoe(PivotedShoe),
    /// Two pivoted shoes driven by the one actuating force.
    ShoePair(ShoePair<PivotedShoe, PivotedShoe>),
    /// One block shoe.
    Block(BlockShoe),
    /// Two block shoes driven by the one actuating force.
    BlockPair(ShoePair<BlockShoe, BlockShoe>),
    /// A simple band brake.
    SimpleBand(SimpleBand),
    /// A differential band brake.
    DifferentialBand(DifferentialBand),
    /// A cone with the axial friction term.
    Cone(ConeEngagement),
}

/// What the gain table covers and how closely.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct GainTableInfo {
    /// Largest μ the table covers.
    pub mu_end: f64,
    /// The μ at which the contact locks, if it can.
    pub locking: Option<f64>,
    /// Largest relative difference between the table's interpolation and the model.
    pub interpolation_error: f64,
}

/// The config key of a brake model parameter under `contact.<table>`.
fn brake_key(table: &str, e: &BrakeError) -> String {
    let parameter = match *e {
        BrakeError::NotFinite { parameter }
        | BrakeError::NotPositive { parameter, .. }
        | BrakeError::OutOfRange { parameter, .. }
        | BrakeError::Negative { parameter, .. } => Some(parameter),
        BrakeError::ArcEndNotAfterStart { .. } => Some(BrakeParameter::ArcEnd),
        _ => None,
    };
    let key = match parameter {
        Some(BrakeParameter::ArcStart) => "arc_start_deg".to_string(),
        Some(BrakeParameter::ArcEnd) => "arc_end_deg".to_string(),
        Some(BrakeParameter::WrapAngle) => "wrap_angle_deg".to_string(),
        Some(p) => p.to_string(),
        None => return format!("contact.{table}"),
    };
    format!("contact.{table}.{key}")
}

fn action(a: ShoeActionSpec) -> ShoeAction {
    match a {
        ShoeActionSpec::Leading => ShoeAction::Leading,
        ShoeActionSpec::Trailing => ShoeAction::Trailing,
    }
}

fn blocks(d: &BlockShoesSpec) -> Result<GainModel, BuildError> {
    let err = |e: BrakeError| BuildError::new(brake_key("block_shoes", &e), e);
    let geometry = BlockGeometry {
        drum_radius_m: d.drum_radius_m,
        actuation_arm_m: d.actuation_arm_m,
        normal_arm_m: d.normal_arm_m,
        friction_offset_m: d.friction_offset_m,
    };
    let block = |a: ShoeActionSpec| BlockShoe::new(geometry, action(a)).map_err(err);
    match d.shoes.as_slice() {
        [one] => Ok(GainModel::Block(block(*one)?)),
        [first, second] => Ok(GainModel::BlockPair(ShoePair::new(
            block(*first)?,
            block(*second)?,
        ))),
        other => Err(BuildError::new(
            "contact.block_shoes.shoes",
            format!("needs one or two shoes, has {}", other.len()),
        )),
    }
}

/// A cone's engagement model at its bedded (uniform-wear) radius: the contact's lever arm
/// r_e/sin α times sin α.
fn cone(c: &ContactSpec, phase: ConePhaseSpec) -> Result<GainModel, BuildError> {
    let alpha = c
        .half_angle_deg
        .ok_or_else(|| {
            BuildError::new("contact.shape", "shape 'cone' needs contact.half_angle_deg")
        })?
        .to_radians();
    let angle = ConeAngle::new(alpha).map_err(|e| geometry_error(c, &e))?;
    let arm = with_contact(c, |k| k.lever_arm(1.0).map_err(|e| geometry_error(c, &e)))?;
    let phase = match phase {
        ConePhaseSpec::Engaging => ConePhase::Engaging,
        ConePhaseSpec::Withdrawing => ConePhase::Withdrawing,
    };
    ConeEngagement::new(angle, arm * libm::sin(alpha), phase)
        .map(GainModel::Cone)
        .map_err(|e| BuildError::new("contact.cone_engagement", e))
}

fn shoes(d: &DrumShoesSpec) -> Result<GainModel, BuildError> {
    let err = |e: BrakeError| BuildError::new(brake_key("drum_shoes", &e), e);
    let geometry = ShoeGeometry {
        drum_radius_m: d.drum_radius_m,
        pin_distance_m: d.pin_distance_m,
        arc_start_rad: d.arc_start_deg.to_radians(),
        arc_end_rad: d.arc_end_deg.to_radians(),
        face_width_m: d.face_width_m,
        actuation_arm_m: d.actuation_arm_m,
    };
    let mounting = match d.mounting {
        MountingSpec::External => Mounting::External,
        MountingSpec::Internal => Mounting::Internal,
    };
    let shoe = |a: ShoeActionSpec| PivotedShoe::new(geometry, mounting, action(a)).map_err(err);
    match d.shoes.as_slice() {
        [one] => Ok(GainModel::Shoe(shoe(*one)?)),
        [first, second] => Ok(GainModel::ShoePair(ShoePair::new(
            shoe(*first)?,
            shoe(*second)?,
        ))),
        other => Err(BuildError::new(
            "contact.drum_shoes.shoes",
            format!("needs one or two shoes, has {}", other.len()),
        )),
    }
}

fn band(b: &BandSpec) -> Result<GainModel, BuildError> {
    let err = |e: BrakeError| BuildError::new(brake_key("band", &e), e);
    let need = |v: Option<f64>, k: &str| {
        v.ok_or_else(|| {
            BuildError::new(
                "contact.band.kind",
                format!("a {} band needs contact.band.{k}", kind_name(b.kind)),
            )
        })
    };
    let phi = b.wrap_angle_deg.to_radians();
    match b.kind {
        BandKindSpec::Simple => {
            let end = match b.lever_end {
                Some(LeverEndSpec::Slack) => LeverEnd::Slack,
                Some(LeverEndSpec::Tight) => LeverEnd::Tight,
                None => {
                    return Err(BuildError::new(
                        "contact.band.kind",
                        "a simple band needs contact.band.lever_end",
                    ));
                }
            };
            let arm = need(b.band_arm_m, "band_arm_m")?;
            SimpleBand::new(b.drum_radius_m, phi, b.actuation_arm_m, arm, end)
                .map(GainModel::SimpleBand)
                .map_err(err)
        }
        BandKindSpec::Differential => {
            let tight = match b.tight_end {
                Some(TightEndSpec::AidsActuator) => TightEndMoment::AidsActuator,
                Some(TightEndSpec::OpposesActuator) => TightEndMoment::OpposesActuator,
                None => {
                    return Err(BuildError::new(
                        "contact.band.kind",
                        "a differential band needs contact.band.tight_end",
                    ));
                }
            };
            DifferentialBand::new(
                b.drum_radius_m,
                phi,
                b.actuation_arm_m,
                need(b.tight_end_arm_m, "tight_end_arm_m")?,
                need(b.slack_end_arm_m, "slack_end_arm_m")?,
                tight,
            )
            .map(GainModel::DifferentialBand)
            .map_err(err)
        }
    }
}

fn kind_name(k: BandKindSpec) -> &'static str {
    match k {
        BandKindSpec::Simple => "simple",
        BandKindSpec::Differential => "differential",
    }
}

impl GainModel {
    /// The model of a `drum_shoes`, `block_shoes` or `band` contact, or of a cone with
    /// `cone_engagement`.
    ///
    /// # Errors
    /// [`BuildError`] naming the key the model rejects or that is missing.
    pub fn from_spec(c: &ContactSpec) -> Result<Self, BuildError> {
        let missing = |table: &str| {
            BuildError::new(
                "contact.shape",
                format!("shape '{}' needs [contact.{table}]", c.shape.name()),
            )
        };
        match c.shape {
            ShapeSpec::DrumShoes => {
                shoes(c.drum_shoes.as_ref().ok_or_else(|| missing("drum_shoes"))?)
            }
            ShapeSpec::BlockShoes => blocks(
                c.block_shoes
                    .as_ref()
                    .ok_or_else(|| missing("block_shoes"))?,
            ),
            ShapeSpec::Band => band(c.band.as_ref().ok_or_else(|| missing("band"))?),
            _ => match c.cone_engagement {
                Some(phase) if c.shape == ShapeSpec::Cone => cone(c, phase),
                _ => Err(BuildError::new(
                    "contact.shape",
                    format!(
                        "shape '{}' is linear in μ: no torque-gain model",
                        c.shape.name()
                    ),
                )),
            },
        }
    }

    fn gain_model(&self) -> &dyn TorqueGain {
        match self {
            Self::Shoe(m) => m,
            Self::ShoePair(m) => m,
            Self::Block(m) => m,
            Self::BlockPair(m) => m,
            Self::SimpleBand(m) => m,
            Self::DifferentialBand(m) => m,
            Self::Cone(m) => m,
        }
    }

    /// g(μ) = T/F, m.
    ///
    /// # Errors
    /// [`BrakeError`] for a bad μ or one at or above the locking μ.
    pub fn torque_per_force(&self, mu: f64) -> Result<f64, BrakeError> {
        self.gain_model().torque_per_force(mu)
    }

    /// The equivalent lever arm g(μ)/μ, m (its limit g′(0) at μ = 0).
    ///
    /// # Errors
    /// As [`Self::torque_per_force`].
    pub fn lever_arm(&self, mu: f64) -> Result<f64, BrakeError> {
        let (g, slope) = self.gain_model().gain_and_slope(mu)?;
        Ok(if mu > 0.0 { g / mu } else { slope })
    }

    /// The μ at which the contact locks, if it can.
    pub fn locking_coefficient(&self) -> Option<f64> {
        self.gain_model().locking_coefficient()
    }

    /// S(μ): the factor between a relative error in μ and the torque's.
    ///
    /// # Errors
    /// As [`Self::torque_per_force`].
    pub fn sensitivity(&self, mu: f64) -> Result<f64, BrakeError> {
        self.gain_model().sensitivity(mu)
    }

    /// The table's μ breakpoints up to `mu_end`: 0, then closer together towards the end.
    pub fn breakpoints(mu_end: f64) -> Vec<f64> {
        // GAIN_POINTS is small: exact in f64.
        #[allow(clippy::cast_precision_loss)]
        let last = (GAIN_POINTS - 1) as f64;
        (0..GAIN_POINTS)
            .map(|i| {
                #[allow(clippy::cast_precision_loss)]
                let u = 1.0 - i as f64 / last;
                mu_end * (1.0 - u * u)
            })
            .collect()
    }

    /// The default end of the table: `limit`, or lower where g(μ)/μ would pass
    /// [`LEVER_ARM_MAX_M`] (found by bisection; g/μ rises with μ towards locking).
    fn default_end(&self, limit: f64) -> f64 {
        let fits = |mu: f64| self.lever_arm(mu).is_ok_and(|r| r <= LEVER_ARM_MAX_M);
        if fits(limit) {
            return limit;
        }
        let (mut lo, mut hi) = (0.0, limit);
        for _ in 0..60 {
            let mid = 0.5 * (lo + hi);
            if fits(mid) {
                lo = mid;
            } else {
                hi = mid;
            }
        }
        lo
    }

    /// The table r(F, μ) at the clamp forces `forces_n` and what it covers.
    ///
    /// # Errors
    /// [`BuildError`] naming `contact.gain_mu_max` when the table's end reaches the locking μ
    /// or a value leaves the fixed-point format.
    pub fn table(
        &self,
        forces_n: &[f64],
        gain_mu_max: Option<f64>,
    ) -> Result<(RadiusTable, GainTableInfo), BuildError> {
        let locking = self.locking_coefficient();
        let mu_end = match gain_mu_max {
            Some(m) => m,
            None => self.default_end(locking.map_or(1.0, |l| (0.9 * l).min(1.0))),
        };
        let key = "contact.gain_mu_max";
        if locking.is_some_and(|l| mu_end >= l) || mu_end.is_nan() || mu_end <= 0.0 {
            return Err(BuildError::new(
                key,
                format!(
                    "{mu_end} must lie above 0 and below the locking μ {}",
                    locking.map_or_else(|| "(none)".to_string(), |l| format!("{l:.4}"))
                ),
            ));
        }
        let mus = Self::breakpoints(mu_end);
        let arm = |mu: f64| self.lever_arm(mu).map_err(|e| BuildError::new(key, e));
        let row: Vec<f64> = mus.iter().map(|&mu| arm(mu)).collect::<Result<_, _>>()?;
        if let Some(last) = row.last().filter(|&&r| r > LEVER_ARM_MAX_M) {
            return Err(BuildError::new(
                key,
                format!(
                    "g(μ)/μ reaches {last:.1} m at μ = {mu_end}, beyond the {LEVER_ARM_MAX_M} m the \
                     fixed-point lever arm holds: lower it"
                ),
            ));
        }
        let rows = vec![row.clone(); forces_n.len()];
        let table = RadiusTable::from_slices(forces_n, &mus, &rows)
            .map_err(|e| BuildError::new(key, format!("the gain table: {e}")))?;
        let mut worst = 0.0f64;
        for (w, r) in mus.windows(2).zip(row.windows(2)) {
            let ([m0, m1], [r0, r1]) = (w, r) else {
                continue;
            };
            for k in 1..SAMPLES_PER_SEGMENT {
                #[allow(clippy::cast_precision_loss)]
                let t = k as f64 / SAMPLES_PER_SEGMENT as f64;
                let exact = arm(m0 + t * (m1 - m0))?;
                let interpolated = r0 + t * (r1 - r0);
                worst = worst.max((interpolated - exact).abs() / exact);
            }
        }
        Ok((
            table,
            GainTableInfo {
                mu_end,
                locking,
                interpolation_error: worst,
            },
        ))
    }
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used, clippy::indexing_slicing)]
    use super::*;
    use crate::schema::ShapeSpec;

    fn crane_drum() -> ContactSpec {
        let mut c = ContactSpec::of_shape(ShapeSpec::DrumShoes, 1);
        c.drum_shoes = Some(DrumShoesSpec {
            drum_radius_m: 0.2,
            pin_distance_m: 0.26,
            arc_start_deg: 25.0,
            arc_end_deg: 125.0,
            face_width_m: 0.08,
            actuation_arm_m: 0.48,
            mounting: MountingSpec::External,
            shoes: vec![ShoeActionSpec::Leading, ShoeActionSpec::Trailing],
        });
        c
    }

    #[test]
    fn the_table_holds_g_over_mu_and_its_interpolation_error_is_measured() {
        let c = crane_drum();
        let model = GainModel::from_spec(&c).unwrap();
        let (table, info) = model.table(&[0.0, 50_000.0], Some(0.6)).unwrap();
        assert_eq!(table.y_breakpoints().len(), GAIN_POINTS);
        // [calc] T = μ·F·r(μ) = F·g(μ) at every breakpoint, to the I8F24 rounding.
        for (mu, r) in table
            .y_breakpoints()
            .iter()
            .zip(table.rows().next().unwrap())
        {
            let mu: f64 = mu.to_num();
            let g = model.torque_per_force(mu).unwrap();
            let want = if mu > 0.0 {
                g / mu
            } else {
                model.lever_arm(0.0).unwrap()
            };
            assert!((r.to_num::<f64>() - want).abs() < 1e-7, "μ {mu}");
        }
        assert!(
            info.interpolation_error > 0.0 && info.interpolation_error < 0.01,
            "{info:?}"
        );
        assert!((info.mu_end - 0.6).abs() < 1e-15);
    }

    #[test]
    fn a_table_end_at_the_locking_mu_is_refused_by_key() {
        let c = crane_drum();
        let model = GainModel::from_spec(&c).unwrap();
        let lock = model.locking_coefficient().unwrap();
        let e = model.table(&[0.0, 1.0], Some(lock)).unwrap_err();
        assert_eq!(e.key, "contact.gain_mu_max");
        // Default: 90 % of the locking μ (this shoe's g/μ stays far below the format's top).
        let (_, info) = model.table(&[0.0, 1.0], None).unwrap();
        assert!((info.mu_end - (0.9 * lock).min(1.0)).abs() < 1e-12);
    }

    #[test]
    fn a_model_error_names_the_drum_key() {
        let mut c = crane_drum();
        if let Some(d) = c.drum_shoes.as_mut() {
            d.arc_end_deg = 20.0;
        }
        let e = GainModel::from_spec(&c).unwrap_err();
        assert_eq!(e.key, "contact.drum_shoes.arc_end_deg", "{e}");
    }

    #[test]
    fn block_shoes_follow_the_lever_balance() {
        // [calc: N = F·a/(b ∓ μ·c), T = μ·N·r — the short-shoe lever balance, Shigley ch. 16]
        let mut c = ContactSpec::of_shape(ShapeSpec::BlockShoes, 1);
        c.block_shoes = Some(BlockShoesSpec {
            drum_radius_m: 0.2,
            actuation_arm_m: 0.6,
            normal_arm_m: 0.2,
            friction_offset_m: 0.05,
            shoes: vec![ShoeActionSpec::Leading, ShoeActionSpec::Trailing],
        });
        let model = GainModel::from_spec(&c).unwrap();
        let mu = 0.3;
        let lead = mu * 0.6 / (0.2 - mu * 0.05) * 0.2;
        let trail = mu * 0.6 / (0.2 + mu * 0.05) * 0.2;
        assert!((model.torque_per_force(mu).unwrap() - (lead + trail)).abs() < 1e-12);
        // Locks where the leading block's denominator vanishes: μ = b/c = 4.
        assert_eq!(model.locking_coefficient(), Some(4.0));
    }

    #[test]
    fn an_engaging_cone_divides_by_sin_alpha_plus_mu_cos_alpha() {
        // [pub: Shigley ch. 16, cone clutch, uniform wear] r_e = (Ro + Ri)/2 projected; with
        // the axial friction of engagement F = N·(sin α + μ·cos α), so g = μ·r_e/(sin α + μ cos α).
        let mut c = ContactSpec::of_shape(ShapeSpec::Cone, 1);
        c.inner_radius_m = Some(0.08);
        c.outer_radius_m = Some(0.10);
        c.half_angle_deg = Some(12.0);
        c.cone_engagement = Some(ConePhaseSpec::Engaging);
        assert!(c.is_nonlinear_in_mu());
        let model = GainModel::from_spec(&c).unwrap();
        let (s, k) = (12f64.to_radians().sin(), 12f64.to_radians().cos());
        let mu = 0.3;
        let want = mu * 0.09 / (s + mu * k);
        assert!((model.torque_per_force(mu).unwrap() - want).abs() < 1e-12 * want.max(1.0));
        // Withdrawing, it holds itself in at μ = tan α [pub: Shigley ch. 16].
        c.cone_engagement = Some(ConePhaseSpec::Withdrawing);
        let held = GainModel::from_spec(&c).unwrap();
        let lock = held.locking_coefficient().unwrap();
        assert!((lock - 12f64.to_radians().tan()).abs() < 1e-12);
    }
}
