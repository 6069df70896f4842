//! Lining panels: the lining temperature and the μ the estimator used.

use plotters::prelude::*;

use super::panel::SinglePanel;

/// Lining temperature used (modelled, or measured while plausible).
pub const TEMPERATURE: SinglePanel = SinglePanel {
    caption: "lining temperature used",
    y_desc: "°C",
    pick: |b| b.temp_c,
    colour: RED,
};

/// μ used (with the adaptation's correction).
pub const MU: SinglePanel = SinglePanel {
    caption: "μ used",
    y_desc: "μ",
    pick: |b| b.mu,
    colour: RGBColor(31, 119, 180),
};
