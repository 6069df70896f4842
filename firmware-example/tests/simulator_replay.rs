//! The firmware's estimator sees exactly the inputs the simulator's replay gives the core for
//! the same trace and config, and its estimates are the simulator's, every field, every sample.
//!
//! Both sides run `clampwise_core::estimator::Estimator::step`: the firmware on the device
//! configuration compiled into it (emitted by its build script from the TOML) behind the ADC
//! driver, the control loop and the HAL stub; the simulator on the configuration it builds from
//! the same TOML at run time, fed by its own trace reader and the shared conversions of `clampwise-convert` (`clampwise
//! replay`). The
//! QEMU runs print the firmware's estimates as raw bits and `qemu-check.sh` compares them line
//! by line with this host build's; together the two checks tie the target to the simulator.
#![allow(clippy::unwrap_used, clippy::expect_used, clippy::indexing_slicing)]

use std::path::Path;

use clampwise_convert::{self as convert, ChannelCal, CoreEstimator, SampleEstimator};
use clampwise_core::estimator::{self, Estimate};
use clampwise_core::flags::Flags;
use clampwise_device::build_core::CoreDevice;
use clampwise_device::config::LoadedConfig;
use clampwise_device::schema::DeviceKind;
use clampwise_firmware_example::app::{Inputs, Processor};
use clampwise_firmware_example::generated::{CONFIG_PATH, DEVICE_CHANNELS, TRACE, TRACE_PATH};
use clampwise_firmware_example::line::Discard;
use clampwise_firmware_example::processor::core_inputs;
use clampwise_firmware_example::replay::{demo_processor, replay};
use clampwise_sim::trace::{RowPolicy, TraceReader};

/// Keeps what the estimator was given and what it returned, sample by sample.
struct Recorder<P> {
    inner: P,
    inputs: Vec<estimator::Inputs<DEVICE_CHANNELS>>,
    estimates: Vec<Estimate>,
}

impl<P: Processor<DEVICE_CHANNELS, Estimate = Estimate>> Processor<DEVICE_CHANNELS>
    for Recorder<P>
{
    type Estimate = Estimate;
    fn step(&mut self, inputs: &Inputs<DEVICE_CHANNELS>) -> Estimate {
        self.inputs.push(core_inputs(inputs));
        let e = self.inner.step(inputs);
        self.estimates.push(e);
        e
    }
}

clampwise_firmware_example::forward_persist!(Recorder, inner);

#[test]
fn firmware_estimates_equal_the_simulators_replay() {
    let mut fw = Recorder {
        inner: demo_processor().unwrap(),
        inputs: Vec::new(),
        estimates: Vec::new(),
    };
    replay(&mut fw, &mut Discard).unwrap();
    assert_eq!(fw.estimates.len(), TRACE.len());

    let loaded = LoadedConfig::load(Path::new(CONFIG_PATH)).unwrap();
    let core = CoreDevice::build(&loaded.config).unwrap();
    let mut sim = CoreEstimator::new(&loaded.config, &core).unwrap();
    let cal = ChannelCal::of(&loaded.config);
    let brake = loaded.config.device.kind == DeviceKind::Brake;
    let mut reader = TraceReader::open(TRACE_PATH, &loaded.config, RowPolicy::Stop, false).unwrap();

    let mut k = 0;
    while let Some(sample) = reader.next_sample().unwrap() {
        let sim_inputs = convert::core_inputs::<DEVICE_CHANNELS>(&sample, &cal, brake);
        assert_eq!(
            fw.inputs[k], sim_inputs,
            "sample {k}: the estimator's inputs"
        );
        // The simulator's estimate row against the firmware's estimate put through the
        // simulator's own (exact) conversion: every field of the row.
        let expected = convert::estimate_row(&sample, &fw.inputs[k], &fw.estimates[k]);
        assert_eq!(sim.step(&sample), expected, "sample {k}: the estimate");
        k += 1;
    }
    assert_eq!(k, fw.estimates.len(), "both replay the whole trace");
    // The trace exercises the sensor diagnostics: a degraded channel, a channel at its rail,
    // and the fallback to the actuator command while every gauge is out.
    let seen = fw
        .estimates
        .iter()
        .fold(Flags::empty(), |acc, e| acc | e.flags);
    for f in [
        Flags::SENSOR_DEGRADED,
        Flags::FORCE_SATURATED,
        Flags::FORCE_FALLBACK,
    ] {
        assert!(seen.contains(f), "{f:?} never raised");
    }
}
