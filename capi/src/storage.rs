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
//! object. The device is built in place, inside its storage (the configuration is about as
//! large as a small part's stack): its slot's header also names the channel count, which says
//! what follows it.
#![allow(non_camel_case_types)]

use core::mem::{MaybeUninit, align_of, size_of};

use clampwise_core::estimator::Estimator;

use crate::desc::cw_device_desc;
use crate::device::{self, CapiTables, Device, DeviceRef};
use crate::status::cw_status;

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

/// What every device slot starts with: the magic word and the channel count, which says
/// which [`DeviceSlot`] follows.
#[repr(C)]
struct SlotHeader {
    magic: u32,
    channels: u8,
}

/// A device of `C` channels as it sits in its storage; built in place.
#[repr(C)]
struct DeviceSlot<const C: usize> {
    header: SlotHeader,
    device: MaybeUninit<Device<C>>,
}

/// Where a device slot sits inside its storage: the largest alignment a slot has on any
/// target, so a slot of every channel count starts at the same address.
const SLOT_ALIGN: usize = 16;

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
    needs::<T>() <= words * 8
}

/// Bytes a `T` takes at the first suitable address of 8-aligned storage.
const fn needs<T>() -> usize {
    size_of::<T>() + align_of::<T>().saturating_sub(align_of::<u64>())
}

/// Bytes a device slot of `C` channels takes at `SLOT_ALIGN` in 8-aligned storage.
const fn slot_needs<const C: usize>() -> usize {
    assert!(align_of::<DeviceSlot<C>>() <= SLOT_ALIGN);
    size_of::<DeviceSlot<C>>() + SLOT_ALIGN - align_of::<u64>()
}

const fn max(a: usize, b: usize) -> usize {
    if a > b { a } else { b }
}

/// Bytes the device storage needs on this target (at most `sizeof(cw_device)`): the largest
/// slot of the channel counts built in.
pub(crate) const DEVICE_NEEDS: usize = {
    let mut n = 0;
    #[cfg(feature = "channels-1")]
    {
        n = max(n, slot_needs::<1>());
    }
    #[cfg(feature = "channels-2")]
    {
        n = max(n, slot_needs::<2>());
    }
    #[cfg(feature = "channels-3")]
    {
        n = max(n, slot_needs::<3>());
    }
    #[cfg(feature = "channels-4")]
    {
        n = max(n, slot_needs::<4>());
    }
    n
};
/// Bytes the estimator storage needs on this target (at most `sizeof(cw_estimator)`).
pub(crate) const ESTIMATOR_NEEDS: usize = needs::<EstimatorSlot>();

const _: () = assert!(DEVICE_NEEDS <= CW_DEVICE_WORDS * 8, "cw_device too small");
const _: () = assert!(
    fits::<EstimatorSlot>(CW_ESTIMATOR_WORDS),
    "cw_estimator too small"
);

/// The aligned place of a `T` inside `words` (the storage's start, plus the padding its
/// alignment needs).
fn place<T>(words: *mut u64) -> *mut T {
    place_at(words, align_of::<T>())
}

/// The first address of `words` aligned to `align`, as a `T`.
fn place_at<T>(words: *mut u64, align: usize) -> *mut T {
    let bytes = words.cast::<u8>();
    bytes.wrapping_add(bytes.align_offset(align)).cast()
}

/// The device slot of `C` channels in a storage.
fn device_slot<const C: usize>(storage: *mut cw_device) -> *mut DeviceSlot<C> {
    place_at(storage.cast(), SLOT_ALIGN)
}

/// Build the device a description holds in its storage. The storage holds no device from
/// the start of the build; on success it holds the new one.
///
/// # Errors
/// As [`device::build_in`], and [`cw_status::CW_ERR_CHANNELS`] for a channel count this
/// library was built without.
///
/// # Safety
/// `storage` points to a writable `cw_device` that no estimator uses; the description's table
/// arrays hold what its lengths say.
pub unsafe fn init_device(storage: *mut cw_device, desc: &cw_device_desc) -> Result<(), cw_status> {
    let header = place_at::<SlotHeader>(storage.cast(), SLOT_ALIGN);
    // SAFETY: `device_slot` stays inside the storage, which `DEVICE_NEEDS` sized for the
    // largest slot; every slot starts with the header at the same, aligned address; the
    // caller owns the storage.
    unsafe { (*header).magic = 0 };
    let built = match desc.channels {
        #[cfg(feature = "channels-1")]
        // SAFETY: as above.
        1 => unsafe { build::<1>(storage, desc) },
        #[cfg(feature = "channels-2")]
        // SAFETY: as above.
        2 => unsafe { build::<2>(storage, desc) },
        #[cfg(feature = "channels-3")]
        // SAFETY: as above.
        3 => unsafe { build::<3>(storage, desc) },
        #[cfg(feature = "channels-4")]
        // SAFETY: as above.
        4 => unsafe { build::<4>(storage, desc) },
        _ => Err(cw_status::CW_ERR_CHANNELS),
    };
    built?;
    // SAFETY: as above; the magic is written last, so only a completed build carries it.
    unsafe {
        (*header).channels = desc.channels;
        (*header).magic = DEVICE_MAGIC;
    }
    Ok(())
}

/// Build a device of `C` channels in its slot. Not inlined: each channel count's build keeps its
/// temporaries in a frame of its own, so the stack holds those of one count, not of all.
///
/// # Safety
/// As [`init_device`].
#[inline(never)]
unsafe fn build<const C: usize>(
    storage: *mut cw_device,
    desc: &cw_device_desc,
) -> Result<(), cw_status> {
    let slot = device_slot::<C>(storage);
    // SAFETY: inside the storage, aligned (see `init_device`); a `MaybeUninit` may hold
    // anything, and nothing else refers to the storage during the build.
    let out = unsafe { &mut *core::ptr::addr_of_mut!((*slot).device) };
    // SAFETY: the description's arrays are the caller's contract.
    unsafe { device::build_in(out, desc) }.map(|_| ())
}

/// The device in its storage, or `None` when it was not initialised.
///
/// # Safety
/// `storage` points to a readable `cw_device` that stays in place, unchanged, for `'a`.
pub unsafe fn device<'a>(storage: *const cw_device) -> Option<DeviceRef<'a>> {
    let storage = storage.cast_mut();
    let header = place_at::<SlotHeader>(storage.cast(), SLOT_ALIGN).cast_const();
    // SAFETY: as for `init_device`; the header is read as plain integers first, and only a
    // completed build leaves the magic, with the channel count of the slot it built.
    unsafe {
        if (*header).magic != DEVICE_MAGIC {
            return None;
        }
        match (*header).channels {
            #[cfg(feature = "channels-1")]
            1 => Some(DeviceRef::One(
                (*device_slot::<1>(storage)).device.assume_init_ref(),
            )),
            #[cfg(feature = "channels-2")]
            2 => Some(DeviceRef::Two(
                (*device_slot::<2>(storage)).device.assume_init_ref(),
            )),
            #[cfg(feature = "channels-3")]
            3 => Some(DeviceRef::Three(
                (*device_slot::<3>(storage)).device.assume_init_ref(),
            )),
            #[cfg(feature = "channels-4")]
            4 => Some(DeviceRef::Four(
                (*device_slot::<4>(storage)).device.assume_init_ref(),
            )),
            _ => None,
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
