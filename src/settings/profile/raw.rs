//! A machine profile as written in TOML, before its values are checked, and which keys belong to
//! which kind of machine.

use crate::post::{CommentStyle, DwellUnit, MachineKind, ProgramUnits, TravelEnvelope};
use serde::Deserialize;

/// A machine profile as written in TOML, before its values are checked. Keys that belong to one
/// kind of machine are optional here and checked against the kind afterwards.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct RawProfile {
    pub(super) name: String,
    pub(super) kind: MachineKind,
    pub(super) units: ProgramUnits,
    pub(super) arc_form: String,
    pub(super) xy_decimals: Option<usize>,
    pub(super) z_decimals: Option<usize>,
    pub(super) feed_decimals: Option<usize>,
    #[serde(default)]
    pub(super) line_numbers: bool,
    pub(super) program_extension: Option<String>,
    #[serde(default)]
    pub(super) comment_style: CommentStyle,
    #[serde(default)]
    pub(super) dwell_unit: DwellUnit,
    #[serde(default)]
    pub(super) start_block: Vec<String>,
    #[serde(default)]
    pub(super) end_block: Vec<String>,
    // Mills and routers.
    pub(super) spindle_on: Option<String>,
    pub(super) spindle_off: Option<String>,
    pub(super) spindle_speed: Option<f64>,
    pub(super) max_spindle_speed: Option<f64>,
    pub(super) spindle_delay: Option<f64>,
    pub(super) retract_height: Option<f64>,
    pub(super) default_depth: Option<f64>,
    // Lasers, plasma tables and waterjets.
    pub(super) beam_on: Option<String>,
    pub(super) beam_off: Option<String>,
    pub(super) torch_on: Option<String>,
    pub(super) torch_off: Option<String>,
    pub(super) jet_on: Option<String>,
    pub(super) jet_off: Option<String>,
    pub(super) pierce_dwell: Option<f64>,
    pub(super) pierce_height: Option<f64>,
    pub(super) cut_height: Option<f64>,
    pub(super) kerf_width: Option<f64>,
    pub(super) pierce_clearance: Option<f64>,
    // Leads, every kind (optional).
    pub(super) lead: Option<String>,
    pub(super) lead_length: Option<f64>,
    pub(super) lead_radius: Option<f64>,
    pub(super) overcut: Option<f64>,
    pub(super) lead_out: Option<bool>,
    // Every kind.
    pub(super) cut_feed: f64,
    pub(super) plunge_feed: f64,
    pub(super) max_feed: f64,
    pub(super) rapid_feed: f64,
    pub(super) acceleration: f64,
    pub(super) safe_height: f64,
    pub(super) travel: TravelEnvelope,
}

/// Keys only mills and routers take.
pub(super) const SPINDLE_KEYS: [&str; 7] = [
    "spindle_on",
    "spindle_off",
    "spindle_speed",
    "max_spindle_speed",
    "spindle_delay",
    "retract_height",
    "default_depth",
];

/// Keys only lasers, plasma tables and waterjets take (the on/off pair depends on the kind).
pub(super) const PROCESS_KEYS: [&str; 11] = [
    "beam_on",
    "beam_off",
    "torch_on",
    "torch_off",
    "jet_on",
    "jet_off",
    "pierce_dwell",
    "pierce_height",
    "cut_height",
    "kerf_width",
    "pierce_clearance",
];

/// The keys that switch the process on and off for a kind of machine that pierces.
pub(super) fn on_off_keys(kind: MachineKind) -> Option<(&'static str, &'static str)> {
    match kind {
        MachineKind::Laser => Some(("beam_on", "beam_off")),
        MachineKind::Plasma => Some(("torch_on", "torch_off")),
        MachineKind::Waterjet => Some(("jet_on", "jet_off")),
        MachineKind::Mill | MachineKind::Router => None,
    }
}

impl RawProfile {
    /// Whether the optional, kind-specific `key` is set.
    pub(super) fn has(&self, key: &str) -> bool {
        match key {
            "spindle_on" => self.spindle_on.is_some(),
            "spindle_off" => self.spindle_off.is_some(),
            "spindle_speed" => self.spindle_speed.is_some(),
            "max_spindle_speed" => self.max_spindle_speed.is_some(),
            "spindle_delay" => self.spindle_delay.is_some(),
            "retract_height" => self.retract_height.is_some(),
            "default_depth" => self.default_depth.is_some(),
            "beam_on" => self.beam_on.is_some(),
            "beam_off" => self.beam_off.is_some(),
            "torch_on" => self.torch_on.is_some(),
            "torch_off" => self.torch_off.is_some(),
            "jet_on" => self.jet_on.is_some(),
            "jet_off" => self.jet_off.is_some(),
            "pierce_dwell" => self.pierce_dwell.is_some(),
            "pierce_height" => self.pierce_height.is_some(),
            "cut_height" => self.cut_height.is_some(),
            "kerf_width" => self.kerf_width.is_some(),
            "pierce_clearance" => self.pierce_clearance.is_some(),
            _ => false,
        }
    }

    pub(super) fn on_off(&self, kind: MachineKind) -> (Option<&String>, Option<&String>) {
        match kind {
            MachineKind::Laser => (self.beam_on.as_ref(), self.beam_off.as_ref()),
            MachineKind::Plasma => (self.torch_on.as_ref(), self.torch_off.as_ref()),
            MachineKind::Waterjet => (self.jet_on.as_ref(), self.jet_off.as_ref()),
            MachineKind::Mill | MachineKind::Router => {
                (self.spindle_on.as_ref(), self.spindle_off.as_ref())
            }
        }
    }
}
