//! Caller-provided storage for the device and the estimator.
//!
//! C declares `cw_device` and `cw_estimator` as plain arrays of `uint64_t` (C99 has no
//! `alignas`); the Rust objects inside may need a larger alignment (a 128-bit integer is
//! 16-aligned on x86-64), so each sits at the first suitably aligned address of its storage,
//! and the storage is sized for that slack. The address is the storage's own, so the same
//! storage always gives the same place: storage must not be moved or copied once
//! initialised.
//!
//! Each slot starts with a magic word written last by the init function; a function handed
//! storage without it returns `CW_ERR_NOT_INITIALISED` rather than reading garbage as an
//! object.
#![allow(non_camel_case_types)]

use core::mem::{align_of, size_of};

use clampwise_core::estimator::Estimator;

use crate::device::{CapiTables, ChannelDevice};

/// 64-bit words of a `cw_device`: the largest target's need (x86-64), checked at compile time
/// on every target.
pub const CW_DEVICE_WORDS: usize = 248;
/// 64-bit words of a `cw_estimator`.
pub const CW_ESTIMATOR_WORDS: usize = 56;

/// Storage of one device configuration (see `cw_device_init`). Never copy or move it once
/// initialised; estimators refer to it.
#[repr(C)]
#[derive(Debug)]
pub struct cw_device {
    /// Opaque.
    pub opaque: [u64; CW_DEVICE_WORDS],
}

/// Storage of one estimator's state (see `cw_estimator_init`). Never copy or move it once
/// initialised; save and restore a state record instead.
#[repr(C)]
#[derive(Debug)]
pub struct cw_estimator {
    /// Opaque.
    pub opaque: [u64; CW_ESTIMATOR_WORDS],
}

const DEVICE_MAGIC: u32 = 0x4357_4456; // "CWDV"
const ESTIMATOR_MAGIC: u32 = 0x4357_4553; // "CWES"

/// The device as it sits in its storage.
#[repr(C)]
pub struct DeviceSlot {
    magic: u32,
    /// The configuration.
    pub device: ChannelDevice,
}

/// An estimator on a device of `C` channels; its configuration lives in a `cw_device`.
pub type ChannelStepper<const C: usize> = Estimator<'static, CapiTables, C>;

/// An estimator of 1, 2, 3 or 4 channels.
#[derive(Clone, Debug)]
pub enum ChannelEstimator {
    /// One channel.
    #[cfg(feature = "channels-1")]
    One(ChannelStepper<1>),
    /// Two channels.
    #[cfg(feature = "channels-2")]
    Two(ChannelStepper<2>),
    /// Three channels.
    #[cfg(feature = "channels-3")]
    Three(ChannelStepper<3>),
    /// Four channels.
    #[cfg(feature = "channels-4")]
    Four(ChannelStepper<4>),
}

/// The estimator as it sits in its storage.
#[repr(C)]
pub struct EstimatorSlot {
    magic: u32,
    /// The estimator.
    pub estimator: ChannelEstimator,
}

/// Bytes a storage of `words` 64-bit words must have for a `T` at any 8-aligned address.
const fn fits<T>(words: usize) -> bool {
    size_of::<T>() + align_of::<T>().saturating_sub(align_of::<u64>()) <= words * 8
}

const _: () = assert!(fits::<DeviceSlot>(CW_DEVICE_WORDS), "cw_device too small");
const _: () = assert!(
    fits::<EstimatorSlot>(CW_ESTIMATOR_WORDS),
    "cw_estimator too small"
);

/// Bytes the device storage needs on this target (at most `sizeof(cw_device)`).
pub const DEVICE_NEEDS: usize =
    size_of::<DeviceSlot>() + align_of::<DeviceSlot>().saturating_sub(align_of::<u64>());
/// Bytes the estimator storage needs on this target (at most `sizeof(cw_estimator)`).
pub const ESTIMATOR_NEEDS: usize =
    size_of::<EstimatorSlot>() + align_of::<EstimatorSlot>().saturating_sub(align_of::<u64>());

/// The aligned place of a `T` inside `words` (the storage's start, plus the padding its
/// alignment needs).
fn place<T>(words: *mut u64) -> *mut T {
    let bytes = words.cast::<u8>();
    bytes
        .wrapping_add(bytes.align_offset(align_of::<T>()))
        .cast()
}

/// Write a device into its storage.
///
/// # Safety
/// `storage` points to a writable `cw_device` that no estimator uses.
pub unsafe fn put_device(storage: *mut cw_device, device: ChannelDevice) {
    let slot = place::<DeviceSlot>(storage.cast());
    // SAFETY: `place` stays inside the storage, which `fits` sized for the slot; the slot is
    // aligned; the caller owns the storage.
    unsafe {
        slot.write(DeviceSlot { magic: 0, device });
        (*slot).magic = DEVICE_MAGIC;
    }
}

/// The device in its storage, or `None` when it was not initialised.
///
/// # Safety
/// `storage` points to a readable `cw_device` that stays in place, unchanged, for `'a`.
pub unsafe fn device<'a>(storage: *const cw_device) -> Option<&'a ChannelDevice> {
    let slot = place::<DeviceSlot>(storage.cast_mut().cast()).cast_const();
    // SAFETY: as for `put_device`; the magic is read as a plain word first, and only storage
    // `put_device` completed holds it.
    unsafe {
        if (*slot).magic == DEVICE_MAGIC {
            Some(&(*slot).device)
        } else {
            None
        }
    }
}

/// Write an estimator into its storage.
///
/// # Safety
/// `storage` points to a writable `cw_estimator`.
pub unsafe fn put_estimator(storage: *mut cw_estimator, estimator: ChannelEstimator) {
    let slot = place::<EstimatorSlot>(storage.cast());
    // SAFETY: as for `put_device`.
    unsafe {
        slot.write(EstimatorSlot {
            magic: 0,
            estimator,
        });
        (*slot).magic = ESTIMATOR_MAGIC;
    }
}

/// The estimator in its storage, or `None` when it was not initialised.
///
/// # Safety
/// `storage` points to a `cw_estimator` that nothing else uses during `'a`.
pub unsafe fn estimator<'a>(storage: *mut cw_estimator) -> Option<&'a mut ChannelEstimator> {
    let slot = place::<EstimatorSlot>(storage.cast());
    // SAFETY: as for `device`.
    unsafe {
        if (*slot).magic == ESTIMATOR_MAGIC {
            Some(&mut (*slot).estimator)
        } else {
            None
        }
    }
}

/// The estimator in its storage, read only, or `None` when it was not initialised.
///
/// # Safety
/// `storage` points to a `cw_estimator` that nothing changes during `'a`.
pub unsafe fn estimator_ref<'a>(storage: *const cw_estimator) -> Option<&'a ChannelEstimator> {
    let slot = place::<EstimatorSlot>(storage.cast_mut().cast()).cast_const();
    // SAFETY: as for `device`.
    unsafe {
        if (*slot).magic == ESTIMATOR_MAGIC {
            Some(&(*slot).estimator)
        } else {
            None
        }
    }
}
