//! Validation of a parsed [`DeviceSpec`]: the rules only the config knows (which keys a shape
//! needs, units of trace columns, ranges the schema states, relations between keys the core
//! never sees). Every problem is collected, not only the first, each named by its key path.
//!
//! A rule the core's constructors check (over-temperature above fade, inner radius below
//! outer, a polygon pad clear of the axis, the fallback less certain than a gauge, whole hertz,
//! …) is not repeated here: [`crate::build_core`] runs them once these pass and names the key
//! the core rejected. The ranges the schema documents are checked here on the value as
//! written: the core sees it rounded to its fixed-point format, where a value a few nano-units
//! below a bound of 0 (or 0.5) rounds onto the bound and would pass.

mod columns;
mod contact;

use crate::schema::{
    AdaptationSpec, DeviceSpec, FrictionSpec, MAX_SENSORS, MU_MAX_POINTS, MuTableSpec,
    RADIUS_MAX_FORCE_POINTS, ShapeSpec, ThermalSpec, WearSpec,
};

/// Every problem the config's own rules find, as (key path, message), in check order.
pub fn problems(c: &DeviceSpec) -> Vec<(String, String)> {
    let mut v = Validator::default();
    device(c, &mut v);
    contact::check(c, &mut v);
    friction(&c.friction, &mut v);
    mu_table(&c.friction.mu, &mut v);
    thermal(&c.thermal, &mut v);
    wear(&c.wear, &mut v);
    sensors(c, &mut v);
    sensing(c, &mut v);
    actuator(c, &mut v);
    adaptation(&c.adaptation, &mut v);
    limits_and_radius_table(c, &mut v);
    if let Some(g) = c.trace.gap_tolerance_ratio {
        v.within("trace.gap_tolerance_ratio", g, 0.0, 100.0);
    }
    columns::check(c, &mut v);
    v.issues
}

#[derive(Default)]
pub(super) struct Validator {
    pub(super) issues: Vec<(String, String)>,
}

impl Validator {
    pub(super) fn issue(&mut self, key: &str, msg: impl Into<String>) {
        self.issues.push((key.to_string(), msg.into()));
    }
    pub(super) fn finite(&mut self, key: &str, v: f64) -> bool {
        if v.is_finite() {
            true
        } else {
            self.issue(key, "must be a finite number");
            false
        }
    }
    pub(super) fn positive(&mut self, key: &str, v: f64) {
        if self.finite(key, v) && v <= 0.0 {
            self.issue(key, format!("must be > 0, got {v}"));
        }
    }
    pub(super) fn non_negative(&mut self, key: &str, v: f64) {
        if self.finite(key, v) && v < 0.0 {
            self.issue(key, format!("must be ≥ 0, got {v}"));
        }
    }
    pub(super) fn within(&mut self, key: &str, v: f64, lo: f64, hi: f64) {
        if self.finite(key, v) && !(lo..=hi).contains(&v) {
            self.issue(key, format!("must be within {lo} … {hi}, got {v}"));
        }
    }
    pub(super) fn increasing(&mut self, key: &str, xs: &[f64], max: usize) {
        if xs.is_empty() {
            self.issue(key, "needs at least one breakpoint");
        }
        if xs.len() > max {
            self.issue(
                key,
                format!("has {} breakpoints; at most {max} are supported", xs.len()),
            );
        }
        for (i, x) in xs.iter().enumerate() {
            if !x.is_finite() {
                self.issue(&format!("{key}[{i}]"), "must be a finite number");
            }
        }
        for (i, w) in xs.windows(2).enumerate() {
            if let [a, b] = w
                && b <= a
            {
                self.issue(
                    &format!("{key}[{}]", i + 1),
                    format!("breakpoints must increase strictly: {b} follows {a}"),
                );
            }
        }
    }
    pub(super) fn count(&mut self, key: &str, n: u32, min: u32) {
        if n < min || n > u32::from(u16::MAX) {
            self.issue(key, format!("must be within {min} … 65535, got {n}"));
        }
    }
    pub(super) fn required(&mut self, key: &str, v: Option<f64>, shape: ShapeSpec) -> Option<f64> {
        if v.is_none() {
            self.issue(
                "contact.shape",
                format!("shape '{}' needs {key}", shape.name()),
            );
        }
        v
    }
    pub(super) fn unused<T>(&mut self, key: &str, v: &Option<T>, shape: ShapeSpec) {
        if v.is_some() {
            self.issue(key, format!("is not used by shape '{}'", shape.name()));
        }
    }
}

/// `[device]`: the period's range and the sub-rate. Whole hertz is the core's rule; the
/// sub-rate is checked here too because the core's thermal and wear models, built before the
/// whole device, would otherwise meet a zero or odd interval first and blame the period.
fn device(c: &DeviceSpec, v: &mut Validator) {
    v.within(
        "device.sample_period_s",
        c.device.sample_period_s,
        1e-6,
        1.0,
    );
    let every = c.device.thermal_wear_every;
    if !every.is_power_of_two() || every > 32 {
        v.issue(
            "device.thermal_wear_every",
            format!("must be 1, 2, 4, 8, 16 or 32 samples, not {every}"),
        );
    }
}

/// `[friction]` apart from the μ table: the schema's ranges. Stick speed and hysteresis are
/// checked here because the core sees only their combination (band centre and width); the
/// transition speed is the core's rule.
fn friction(f: &FrictionSpec, v: &mut Validator) {
    v.within("friction.static_ratio", f.static_ratio, 0.5, 1.6);
    v.positive("friction.stick_speed_rad_s", f.stick_speed_rad_s);
    v.positive("friction.stick_hysteresis_rad_s", f.stick_hysteresis_rad_s);
    v.non_negative("friction.drag_torque_nm", f.drag_torque_nm);
    v.non_negative(
        "friction.drag_viscous_nm_per_rad_s",
        f.drag_viscous_nm_per_rad_s,
    );
}

/// `[friction.mu]`: axes and shape of the table; μ's own range is the core's rule.
fn mu_table(mu: &MuTableSpec, v: &mut Validator) {
    v.increasing(
        "friction.mu.temperature_c",
        &mu.temperature_c,
        MU_MAX_POINTS,
    );
    v.increasing(
        "friction.mu.slip_speed_rad_s",
        &mu.slip_speed_rad_s,
        MU_MAX_POINTS,
    );
    for (i, t) in mu.temperature_c.iter().enumerate() {
        if !(-50.0..=1000.0).contains(t) {
            v.issue(
                &format!("friction.mu.temperature_c[{i}]"),
                format!("{t} °C is outside the core's envelope −50 … 1000 °C"),
            );
        }
    }
    if mu.values.len() != mu.temperature_c.len() {
        v.issue(
            "friction.mu.values",
            format!(
                "has {} rows; temperature_c has {} breakpoints (one row per temperature)",
                mu.values.len(),
                mu.temperature_c.len()
            ),
        );
    }
    for (i, row) in mu.values.iter().enumerate() {
        if row.len() != mu.slip_speed_rad_s.len() {
            v.issue(
                &format!("friction.mu.values[{i}]"),
                format!(
                    "has {} values; slip_speed_rad_s has {} breakpoints",
                    row.len(),
                    mu.slip_speed_rad_s.len()
                ),
            );
        }
    }
}

/// `[thermal]`: one way of giving the cooling, and the schema's ranges. Positivity of heat
/// capacities and time constants, and the order of the flag thresholds and of the measured
/// limits, are the core thermal model's rules.
fn thermal(t: &ThermalSpec, v: &mut Validator) {
    match (t.cooling_time_constant_s, t.heat_transfer_w_per_m2_k, t.cooling_area_m2) {
        (Some(_), None, None) => {}
        // The core sees only the product h·A, so each factor's sign is checked here.
        (None, Some(h), Some(a)) => {
            v.positive("thermal.heat_transfer_w_per_m2_k", h);
            v.positive("thermal.cooling_area_m2", a);
        }
        (Some(_), _, _) => v.issue(
            "thermal.cooling_time_constant_s",
            "give either cooling_time_constant_s or heat_transfer_w_per_m2_k with cooling_area_m2, not both",
        ),
        (None, _, _) => v.issue(
            "thermal",
            "needs cooling_time_constant_s, or heat_transfer_w_per_m2_k with cooling_area_m2",
        ),
    }
    v.within(
        "thermal.heat_into_rotor_ratio",
        t.heat_into_rotor_ratio,
        1e-3,
        1.0,
    );
    v.within("thermal.ambient_c", t.ambient_c, -50.0, 200.0);
    if let Some(t0) = t.initial_temperature_c {
        v.within("thermal.initial_temperature_c", t0, -50.0, 1000.0);
    }
    v.within("thermal.fade_c", t.fade_c, -50.0, 1000.0);
    v.within(
        "thermal.over_temperature_c",
        t.over_temperature_c,
        -50.0,
        1000.0,
    );
    v.within("thermal.flag_hysteresis_k", t.flag_hysteresis_k, 0.0, 500.0);
    if let Some(m) = &t.measured {
        v.within("thermal.measured.min_c", m.min_c, -273.0, 1500.0);
        v.within("thermal.measured.max_c", m.max_c, -273.0, 1500.0);
    }
}

/// `[wear]`: the schema's ranges. The wear rate, the pad area and the replace-by thickness
/// below the new one are the core wear model's rules.
fn wear(w: &WearSpec, v: &mut Validator) {
    v.within("wear.bedding_energy_j", w.bedding_energy_j, 1.0, 1e13);
    v.within("wear.initial_energy_j", w.initial_energy_j, 0.0, 1e14);
    v.positive("wear.lining_thickness_m", w.lining_thickness_m);
    v.non_negative("wear.minimum_thickness_m", w.minimum_thickness_m);
}

/// `[[sensor]]`: how many, and a usable gain. Rails (32-bit codes, apart by both margins) are
/// the core calibration's rules.
fn sensors(c: &DeviceSpec, v: &mut Validator) {
    if c.sensors.is_empty() || c.sensors.len() > MAX_SENSORS {
        v.issue(
            "sensor",
            format!(
                "needs 1 … {MAX_SENSORS} [[sensor]] tables, found {}",
                c.sensors.len()
            ),
        );
    }
    for (i, s) in c.sensors.iter().enumerate() {
        if !s.gain_n_per_count.is_finite() || s.gain_n_per_count == 0.0 {
            v.issue(
                &format!("sensor[{i}].gain_n_per_count"),
                "must be a finite, non-zero number",
            );
        }
        v.finite(&format!("sensor[{i}].offset_counts"), s.offset_counts);
    }
}

/// `[sensing]`: sample counts, the schema's ranges, and whether a single gauge can see its
/// own faults. Filter, plausible range, rate, stuck check and vote tolerance are the core
/// sensor's rules.
fn sensing(c: &DeviceSpec, v: &mut Validator) {
    let sn = &c.sensing;
    v.non_negative("sensing.noise_band_n", sn.noise_band_n);
    v.non_negative("sensing.channel_uncertainty_n", sn.channel_uncertainty_n);
    v.count("sensing.max_hold_samples", sn.max_hold_samples, 0);
    v.count(
        "sensing.debounce_raise_samples",
        sn.debounce_raise_samples,
        1,
    );
    v.count(
        "sensing.debounce_clear_samples",
        sn.debounce_clear_samples,
        1,
    );
    v.count(
        "sensing.disagreement_debounce_samples",
        sn.disagreement_debounce_samples,
        1,
    );
    if c.sensors.len() == 1
        && sn.stuck.is_none()
        && c.actuator.is_none()
        && !sn.accept_undetectable_faults
    {
        v.issue(
            "sensing.stuck",
            "a single gauge with no [sensing.stuck] check and no [actuator] model cannot detect \
             its own faults (frozen, drifting, wrong gain), so its ± would hold only while it is \
             healthy: add one of them, or set sensing.accept_undetectable_faults = true to \
             acknowledge it",
        );
    }
}

/// `[actuator]`: a gain that makes force rise with command (the core asks only for
/// non-zero) and the schema's ranges. Response time and the uncertainty above a gauge's are
/// the core's rules.
fn actuator(c: &DeviceSpec, v: &mut Validator) {
    if let Some(a) = &c.actuator {
        v.positive("actuator.force_n_per_command", a.force_n_per_command);
        v.non_negative("actuator.hysteresis_n", a.hysteresis_n);
    }
}

/// `[adaptation]`: checked here because the core builds its adaptation only when enabled,
/// and a disabled block should still be one that could be enabled.
fn adaptation(a: &AdaptationSpec, v: &mut Validator) {
    v.within("adaptation.band_ratio", a.band_ratio, 0.0, 0.5);
    v.within(
        "adaptation.forgetting_factor",
        a.forgetting_factor,
        0.9,
        1.0,
    );
    v.within(
        "adaptation.torque_full_scale_nm",
        a.torque_full_scale_nm,
        1e-3,
        500e3,
    );
    if v.finite("adaptation.min_excitation_ratio", a.min_excitation_ratio)
        && !(a.min_excitation_ratio > 0.0 && a.min_excitation_ratio < 1.0)
    {
        v.issue(
            "adaptation.min_excitation_ratio",
            "must be within 0 … 1 (both excluded)",
        );
    }
}

/// `[limits]` and `[radius_table]`: the envelope the simulator and the radius table span. The
/// adaptation threshold at or above the touch force is the core's rule.
fn limits_and_radius_table(c: &DeviceSpec, v: &mut Validator) {
    let l = &c.limits;
    v.within("limits.max_clamp_force_n", l.max_clamp_force_n, 1.0, 200e3);
    v.non_negative("limits.touch_force_n", l.touch_force_n);
    if l.touch_force_n >= l.max_clamp_force_n {
        v.issue("limits.touch_force_n", "must be below max_clamp_force_n");
    }
    let r = &c.radius_table;
    v.increasing("radius_table.force_n", &r.force_n, RADIUS_MAX_FORCE_POINTS);
    for (i, &x) in r.force_n.iter().enumerate() {
        if x < 0.0 {
            v.issue(
                &format!("radius_table.force_n[{i}]"),
                format!("must be ≥ 0, got {x}"),
            );
        }
    }
}
