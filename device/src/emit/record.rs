//! The state record a replay starts from, as a generated `const`.

use std::fmt::Write as _;

use super::EmitError;
use crate::build_core::{Device, InitialState};

/// `DEVICE_INITIAL_RECORD`: the saved state a replay starts from when the config sets
/// `thermal.initial_temperature_c` or `wear.initial_energy_j` (the simulator's replay starts
/// there too), `None` for a new lining at ambient temperature.
///
/// # Errors
/// [`EmitError::InitialRecord`] when the core would refuse to restore the record: checked
/// here, so a firmware's start-up restore cannot meet a record it rejects unless flash changed.
pub fn initial_record_source<const C: usize>(
    device: &Device<C>,
    initial: &InitialState,
) -> Result<String, EmitError> {
    let record = initial.record(device);
    if let Some(r) = &record {
        clampwise_core::estimator::Estimator::restore(device, r)
            .map_err(|e| EmitError::InitialRecord(e.to_string()))?;
    }
    let mut source = String::new();
    let _ = writeln!(
        source,
        "/// Saved state the replay starts from (`thermal.initial_temperature_c`,\n\
         /// `wear.initial_energy_j`); `None`: a new lining at ambient temperature.\n\
         pub const DEVICE_INITIAL_RECORD: Option<[u8; ::clampwise_core::state_record::RECORD_LEN]> = {};",
        record.map_or_else(
            || "None".to_string(),
            |r| format!(
                "Some([{}])",
                r.iter().map(u8::to_string).collect::<Vec<_>>().join(", ")
            )
        )
    );
    Ok(source)
}
