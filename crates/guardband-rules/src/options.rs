//! The numbers the derivations and rules read, as plain settings. The
//! driver (`guardband-check`) fills them from `guardband.toml`; the rules
//! never read a file.

use crate::derive::RangeMode;
use guardband_model::Severity;
use std::collections::HashMap;

/// What the derivations and the lint rules are told.
#[derive(Debug, Clone)]
pub struct Options {
    /// Required margin of a limit's low edge above rated load, as a fraction.
    pub margin: f64,
    /// Whether the statistical (root-sum-square) window is checked as well.
    pub statistical: bool,
    /// How many standard deviations one stated ± stands for.
    pub sigma: f64,
    /// How ranges (`lo .. hi`) enter the statistical window.
    pub ranges: RangeMode,
    /// Largest fraction of parts, in ppm, allowed to trip below rated load plus margin.
    pub escape_ppm: f64,
    /// Target lifetime for conductor ratings, in seconds (None: the layer's reference lifetime).
    pub lifetime: Option<f64>,
    /// Severity overrides by rule name (names already checked against the
    /// registry); `None` turns a rule off.
    pub severities: HashMap<String, Option<Severity>>,
}

impl Default for Options {
    fn default() -> Self {
        Options {
            margin: 0.2,
            statistical: true,
            sigma: 3.0,
            ranges: RangeMode::Uniform,
            escape_ppm: 1.0,
            lifetime: None,
            severities: HashMap::new(),
        }
    }
}
