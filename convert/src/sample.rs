//! One trace sample in SI units, as the simulator's trace reader (or a binding's caller) gives
//! it to the estimator.

/// One force channel of a sample as it came from the trace.
#[derive(Clone, Copy, Debug, PartialEq, Default)]
pub enum Channel {
    /// Column not present in the trace.
    #[default]
    Absent,
    /// Raw ADC counts (already an integer).
    Counts(i32),
    /// Calibrated force, N (the logger calibrated it).
    Newtons(f64),
}

/// One trace row after column mapping and unit conversion (SI units).
#[derive(Clone, Copy, Debug, PartialEq, Default)]
pub struct TraceSample {
    /// 1-based line in the source file.
    pub line: u64,
    /// Time, s.
    pub t_s: f64,
    /// Force channels 1–4.
    pub force: [Channel; 4],
    /// Valid bit of each channel (true when the trace has no valid column).
    pub force_valid: [bool; 4],
    /// Input shaft speed, rad/s.
    pub omega_in_rad_s: f64,
    /// Output shaft speed, rad/s (0 for a brake).
    pub omega_out_rad_s: f64,
    /// Actuator command, in the column's converted unit.
    pub command: Option<f64>,
    /// Measured lining/rotor temperature, °C.
    pub temp_c: Option<f64>,
    /// Ambient temperature, °C.
    pub ambient_c: Option<f64>,
    /// Reference torque (bench flange), N·m.
    pub torque_ref_nm: Option<f64>,
}
