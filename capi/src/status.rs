//! The result of every C API function, and its message.
#![allow(non_camel_case_types)]

use clampwise_core::state_record::RecordError;

/// What a `cw_*` function did. `CW_OK` is 0; every other value is an error and the function
/// changed none of its outputs (except where its documentation says otherwise).
#[repr(i32)]
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum cw_status {
    /// Done.
    CW_OK = 0,
    /// A pointer argument was NULL.
    CW_ERR_NULL = 1,
    /// `channels` is not 1 … 4, or a count this library was built without
    /// (`cw_channels_supported`).
    CW_ERR_CHANNELS = 2,
    /// A `has_*`, `two_node` or presence field is neither 0 nor 1.
    CW_ERR_BAD_FLAG = 3,
    /// The friction-radius table: a length beyond its capacity (over bedding two breakpoints in
    /// a library of the bedding axis alone), a NULL array, breakpoints not increasing, or an
    /// unknown `lever_axis`.
    CW_ERR_RADIUS_TABLE = 4,
    /// The μ table: a length beyond its capacity, a NULL array, or breakpoints not increasing.
    CW_ERR_MU_TABLE = 5,
    /// The friction model (stick/slip band, transition speed, drag) was rejected.
    CW_ERR_FRICTION = 6,
    /// The thermal model was rejected.
    CW_ERR_THERMAL = 7,
    /// The wear model was rejected.
    CW_ERR_WEAR = 8,
    /// The sensor conditioning (calibration, filter, diagnostics, fallback) was rejected.
    CW_ERR_SENSOR = 9,
    /// The μ correction was rejected.
    CW_ERR_ADAPT = 10,
    /// The parts do not fit together (sample periods, faces, limits, tolerances).
    CW_ERR_DEVICE = 11,
    /// The device's numbers are not those the host emitted: its checksum differs.
    CW_ERR_CHECKSUM = 12,
    /// The device or estimator storage was not initialised by `cw_device_init` /
    /// `cw_estimator_init`.
    CW_ERR_NOT_INITIALISED = 13,
    /// The inputs carry a channel mask or presence bit the device does not have.
    CW_ERR_INPUTS = 14,
    /// A buffer is shorter than `CW_RECORD_LEN`.
    CW_ERR_BUFFER = 15,
    /// The state record is damaged or of another format (length, magic, version, CRC).
    CW_ERR_RECORD_FORMAT = 16,
    /// The state record was saved for another device configuration.
    CW_ERR_RECORD_DEVICE = 17,
    /// The state record's values contradict each other or the device.
    CW_ERR_RECORD_STATE = 18,
    /// The friction-radius table's `lever_axis` is one this library was built without
    /// (`cw_lever_axes_supported`).
    CW_ERR_LEVER_AXIS = 19,
}

impl cw_status {
    /// Every status, in order.
    pub const ALL: [Self; 20] = [
        Self::CW_OK,
        Self::CW_ERR_NULL,
        Self::CW_ERR_CHANNELS,
        Self::CW_ERR_BAD_FLAG,
        Self::CW_ERR_RADIUS_TABLE,
        Self::CW_ERR_MU_TABLE,
        Self::CW_ERR_FRICTION,
        Self::CW_ERR_THERMAL,
        Self::CW_ERR_WEAR,
        Self::CW_ERR_SENSOR,
        Self::CW_ERR_ADAPT,
        Self::CW_ERR_DEVICE,
        Self::CW_ERR_CHECKSUM,
        Self::CW_ERR_NOT_INITIALISED,
        Self::CW_ERR_INPUTS,
        Self::CW_ERR_BUFFER,
        Self::CW_ERR_RECORD_FORMAT,
        Self::CW_ERR_RECORD_DEVICE,
        Self::CW_ERR_RECORD_STATE,
        Self::CW_ERR_LEVER_AXIS,
    ];

    /// The status of a code, or `None` for a code that is none.
    pub fn from_code(code: i32) -> Option<Self> {
        Self::ALL.into_iter().find(|s| *s as i32 == code)
    }

    /// A NUL-terminated English message.
    pub const fn message(self) -> &'static core::ffi::CStr {
        match self {
            Self::CW_OK => c"ok",
            Self::CW_ERR_NULL => c"a pointer argument is NULL",
            Self::CW_ERR_CHANNELS => {
                c"channels must be 1 to 4 and among those the library was built for"
            }
            Self::CW_ERR_BAD_FLAG => c"a has_*/two_node field is neither 0 nor 1",
            Self::CW_ERR_RADIUS_TABLE => {
                c"friction-radius table: length beyond capacity, breakpoints not increasing, or unknown axis"
            }
            Self::CW_ERR_MU_TABLE => {
                c"mu table: length beyond capacity or breakpoints not increasing"
            }
            Self::CW_ERR_FRICTION => c"friction model rejected (stick/slip band, speeds, drag)",
            Self::CW_ERR_THERMAL => c"thermal model rejected",
            Self::CW_ERR_WEAR => c"wear model rejected",
            Self::CW_ERR_SENSOR => c"sensor conditioning rejected",
            Self::CW_ERR_ADAPT => c"mu correction rejected",
            Self::CW_ERR_DEVICE => {
                c"device parts do not fit together (periods, faces, limits, tolerances)"
            }
            Self::CW_ERR_CHECKSUM => c"device checksum differs from the emitted one",
            Self::CW_ERR_NOT_INITIALISED => c"device or estimator storage is not initialised",
            Self::CW_ERR_INPUTS => c"inputs name a channel or bit the device does not have",
            Self::CW_ERR_BUFFER => c"buffer shorter than CW_RECORD_LEN",
            Self::CW_ERR_RECORD_FORMAT => {
                c"state record damaged or of another format (length, magic, version, CRC)"
            }
            Self::CW_ERR_RECORD_DEVICE => c"state record saved for another device configuration",
            Self::CW_ERR_RECORD_STATE => c"state record values contradict each other or the device",
            Self::CW_ERR_LEVER_AXIS => {
                c"radius table lever axis (bedding or mu) not among those the library was built for"
            }
        }
    }

    /// The status of a record the core refused.
    pub const fn of_record(e: RecordError) -> Self {
        match e {
            RecordError::WrongLength { .. }
            | RecordError::BadMagic
            | RecordError::UnsupportedVersion { .. }
            | RecordError::LengthField { .. }
            | RecordError::Checksum { .. }
            | RecordError::ReservedNotZero => Self::CW_ERR_RECORD_FORMAT,
            RecordError::ConfigMismatch { .. } => Self::CW_ERR_RECORD_DEVICE,
            _ => Self::CW_ERR_RECORD_STATE,
        }
    }
}
