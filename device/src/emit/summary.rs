//! The tables of a device as text (`clampwise tables`): the friction radius over clamp force
//! and bedding, kinetic μ over lining temperature and slip speed, and the device checksum.

use std::fmt::Write as _;

use crate::build_core::CoreDevice;
use crate::config::LoadedConfig;

/// The tables as text, with the device checksum.
pub fn human(cfg: &LoadedConfig, core: &CoreDevice) -> String {
    let t = &core.tables;
    let c = &cfg.config;
    let mut o = format!("tables of {} ({})\n", cfg.file, c.device.name);
    let second = match &t.gain {
        None => {
            let _ = writeln!(
                o,
                "  contact: {} × {} faces; lever arm per face (r_e, / sin α for a cone): {:.6} m (uniform pressure, new), {:.6} m (uniform wear, bedded)",
                c.contact.shape.name(),
                c.contact.faces,
                t.radii_m.0,
                t.radii_m.1
            );
            let _ = writeln!(
                o,
                "  friction radius r_e [m] (rows: clamp force N; columns: bedding):"
            );
            "bedding"
        }
        Some((model, info)) => {
            let _ = writeln!(
                o,
                "  contact: {} × {}; torque T = μ · F · r(μ) = F · g(μ), F the measured actuating force; r(0) = {:.6} m, r({:.3}) = {:.6} m",
                c.contact.shape.name(),
                c.contact.faces,
                t.radii_m.0,
                info.mu_end,
                t.radii_m.1
            );
            let lock = info.locking.map_or_else(
                || "never locks".to_string(),
                |l| format!("locks at μ = {l:.4}"),
            );
            let _ = writeln!(
                o,
                "  {lock}; table to μ = {:.3} (SELF_LOCKING beyond); interpolation within {:.3} % of the model, added to the radius tolerance",
                info.mu_end,
                100.0 * info.interpolation_error
            );
            let mut line = String::from("  sensitivity S(μ) = μ·g′/g (δT/T = S·δμ/μ):");
            for mu in [0.1, 0.2, 0.3, 0.4, 0.5] {
                if let Ok(s) = model.sensitivity(mu) {
                    let _ = write!(line, " {s:.2} at {mu}");
                }
            }
            let _ = writeln!(o, "{line}");
            let _ = writeln!(
                o,
                "  equivalent lever arm r(μ) = g(μ)/μ [m] (rows: actuating force N; columns: μ):"
            );
            "μ"
        }
    };
    let mut h = format!("    F \\ {second:<7}");
    for b in t.radius.y_breakpoints() {
        let _ = write!(h, "{:>12}", format!("{:.3}", b.to_num::<f64>()));
    }
    let _ = writeln!(o, "{h}");
    for (f, row) in t.radius.x_breakpoints().iter().zip(t.radius.rows()) {
        let mut l = format!("    {:>12}", format!("{:.0}", f.to_num::<f64>()));
        for v in row {
            let _ = write!(l, "{:>12.6}", v.to_num::<f64>());
        }
        let _ = writeln!(o, "{l}");
    }
    let _ = writeln!(
        o,
        "  kinetic μ (rows: lining temperature °C; columns: |slip speed| rad/s):"
    );
    let mut h = String::from("    T \\ v      ");
    for v in t.mu.y_breakpoints() {
        let _ = write!(h, "{:>9}", format!("{}", v.to_num::<f64>()));
    }
    let _ = writeln!(o, "{h}");
    for (tc, row) in t.mu.x_breakpoints().iter().zip(t.mu.rows()) {
        let mut l = format!("    {:>10}", format!("{}", tc.to_num::<f64>()));
        for v in row {
            let _ = write!(l, "{:>9.4}", v.to_num::<f64>());
        }
        let _ = writeln!(o, "{l}");
    }
    let _ = writeln!(
        o,
        "  static ratio {} (holding capacity = faces · μ · ratio · F · r_e)",
        c.friction.static_ratio
    );
    let _ = writeln!(
        o,
        "  checksum (the core's DeviceConfig::checksum, the firmware's DEVICE_CHECKSUM): 0x{:08X}",
        core.device.checksum()
    );
    o
}
