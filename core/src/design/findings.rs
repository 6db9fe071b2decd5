//! Findings: errors, warnings and notes, each tied to the item it concerns
//! and typed by what it is about ([`FindingKind`]).
//!
//! Every finding text of the design chain is written here, by one builder
//! per kind, so the wording stays consistent and a new finding has one
//! place to go. A text names the item, the amount and the fix.

use std::fmt;
use std::sync::Arc;

use serde::Serialize;

use crate::project::{NodeId, RunId};

/// How serious a finding is.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Severity {
    /// The design is incomplete or wrong until this is fixed.
    Error,
    /// The design works but something needs attention.
    Warning,
    /// Information.
    Note,
}

/// What a finding is about. Stable: the snake_case name is written to the
/// JSON (`findings[].kind`, docs/solve-json.md) and scripts may key on it.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum FindingKind {
    // ---- layout (topology)
    /// The project has no heat source.
    NoSource,
    /// The heat source has no run.
    SourceUnconnected,
    /// A run closes a loop in the drawn tree.
    LoopClosed,
    /// An emitter is not connected to the source.
    EmitterUnreachable,
    /// A junction, header or source is not connected to the source.
    NodeUnreachable,
    /// A run is not connected to the source.
    RunUnreachable,
    /// A junction or header with nothing downstream.
    DeadEnd,
    /// A header has more outlet runs than outlets.
    HeaderOutletsExceeded,
    /// A reverse-return branch forks (derived as direct return).
    ReverseReturnFork,
    /// A balancing device on a run of a reverse-return chain (left out).
    DeviceInReverseChain,
    /// A balancing device inside the branch of another (left out).
    NestedDevice,
    /// A balancing device's model is not in the catalog.
    DeviceModelUnknown,
    /// A balancing valve's fixed setting is not a step of its family.
    DeviceSettingUnknown,
    /// A Δp controller's set-point is outside the model's range.
    SetpointOutOfRange,
    /// A Δp controller fully open cannot hold its branch's Δp.
    ControllerSaturated,
    /// The controllers' regulation did not settle.
    RegulationNotSettled,
    // ---- inputs
    /// A design setting is out of range.
    SettingsInvalid,
    /// Design temperatures outside the water-property range.
    WaterPropertyRange,
    /// The pump curve points do not describe a falling curve.
    PumpCurveInvalid,
    /// An emitter has zero load.
    ZeroLoad,
    /// An emitter's own design failed (model data, temperatures).
    EmitterDesignFailed,
    /// An emitter's valve family is not in the catalog.
    ValveFamilyUnknown,
    /// An emitter's lockshield family is not in the catalog.
    LockshieldFamilyUnknown,
    /// No emitter is connected to the source.
    NoEmitter,
    // ---- sizing
    /// A pipe series of the settings is not in the catalog.
    PipeSeriesUnknown,
    /// A run's fixed size is not in its series.
    FixedSizeUnknown,
    /// Even the largest size of the series exceeds the limits.
    SizeLimitsExceeded,
    /// A pipe's hydraulic data are not physical.
    PipeLawInvalid,
    /// A pipe held at a fixed size is over the pressure-gradient limit at
    /// its design flow.
    GradientOverLimit,
    // ---- emitters
    /// An emitter delivers less than its load at the design temperatures.
    EmitterShortfall,
    /// A floor's mean surface temperature exceeds its EN 1264 limit.
    FloorSurfaceLimit,
    /// A floor loop's pressure drop exceeds the common-practice limit.
    FloorLoopPressureDrop,
    /// A floor loop is longer than the common-practice limit.
    FloorLoopLength,
    /// A radiator needs more than the longest of its type.
    RadiatorBeyondCatalog,
    // ---- balancing and pump
    /// No emitter has a design flow.
    NoDesignFlow,
    /// The pump curve gives less than the index circuit needs.
    PumpTooWeak,
    /// A fixed presetting is not a step of the valve family.
    PresettingUnknown,
    /// The pump head cannot drive an emitter's design flow.
    ValveCannotDeliver,
    /// The needed Kv is above the valve's largest step.
    KvAboveLargest,
    /// The needed Kv is below the valve's smallest step.
    KvBelowSmallest,
    /// No pair of valve and lockshield steps brings the flow within the
    /// tolerance (the steps are too coarse).
    TrimOutOfReach,
    /// A fixed lockshield setting is not a step of its family.
    LockshieldSettingUnknown,
    /// The presetting could not be chosen.
    PresettingFailed,
    /// Valve authority below the common-practice limit.
    LowAuthority,
    /// The source's capacity is below the total load.
    SourceCapacity,
    /// The expansion vessel could not be sized.
    VesselNotSized,
    /// The expansion vessel's volume is more than one membrane vessel
    /// holds: several in parallel or a pressurisation unit.
    VesselsInParallel,
    // ---- operating solve
    /// The derived network is not valid for the solver.
    NetworkInvalid,
    /// The operating solve did not converge.
    NotConverged,
    /// An emitter's operating flow is outside the flow tolerance.
    FlowOutOfTolerance,
    /// An emitter's return is hotter than the design return by more than
    /// the margin.
    HotReturn,
    /// In installed mode a room gets too little of its load.
    RoomShort,
    /// A Δp-controlled pump cannot hold its set-point.
    PumpOnMaxCurve,
    /// A pipe's operating velocity exceeds its class limit.
    VelocityOverLimit,
    /// A pumped circuit is connected where it cannot work (a pump-only
    /// circuit off a network, a circuit warmer than its feed, a separator
    /// outlet that is not a pumped circuit).
    CircuitConnectionInvalid,
    /// The feeding network does not give a mixing or injection circuit the
    /// Δp its valve needs to pass the circuit's primary flow.
    CircuitFeedShort,
    /// A hydraulic separator gets less primary flow than its circuits draw:
    /// their supply is mixed down.
    SeparatorFlowShort,
    /// A mixing or injection circuit is set warmer than the water it is fed
    /// with: it runs at the feed's temperature.
    CircuitFedTooCold,
    /// A balancing device sits where it can have no effect.
    DeviceIgnored,
}

impl FindingKind {
    /// Kinds that say a room gets less than its load (what an output shown
    /// in warning colour stands for).
    pub const OUTPUT_SHORT: [Self; 3] = [Self::FlowOutOfTolerance, Self::RoomShort, Self::EmitterShortfall];
    /// Kinds that say a pipe is over its velocity limit.
    pub const VELOCITY: [Self; 2] = [Self::VelocityOverLimit, Self::SizeLimitsExceeded];
    /// Kinds that say a pipe is over the gradient limit.
    pub const GRADIENT: [Self; 2] = [Self::GradientOverLimit, Self::SizeLimitsExceeded];
    /// Kinds that say a balancing device on a run does not do its job.
    pub const DEVICE: [Self; 6] = [
        Self::FlowOutOfTolerance,
        Self::ControllerSaturated,
        Self::RegulationNotSettled,
        Self::SetpointOutOfRange,
        Self::DeviceModelUnknown,
        Self::DeviceSettingUnknown,
    ];

    /// Every kind, in declaration order.
    pub const ALL: [Self; 59] = [
        Self::NoSource,
        Self::SourceUnconnected,
        Self::LoopClosed,
        Self::EmitterUnreachable,
        Self::NodeUnreachable,
        Self::RunUnreachable,
        Self::DeadEnd,
        Self::HeaderOutletsExceeded,
        Self::ReverseReturnFork,
        Self::DeviceInReverseChain,
        Self::NestedDevice,
        Self::DeviceModelUnknown,
        Self::DeviceSettingUnknown,
        Self::SetpointOutOfRange,
        Self::ControllerSaturated,
        Self::RegulationNotSettled,
        Self::SettingsInvalid,
        Self::WaterPropertyRange,
        Self::PumpCurveInvalid,
        Self::ZeroLoad,
        Self::EmitterDesignFailed,
        Self::ValveFamilyUnknown,
        Self::LockshieldFamilyUnknown,
        Self::NoEmitter,
        Self::PipeSeriesUnknown,
        Self::FixedSizeUnknown,
        Self::SizeLimitsExceeded,
        Self::PipeLawInvalid,
        Self::GradientOverLimit,
        Self::EmitterShortfall,
        Self::FloorSurfaceLimit,
        Self::FloorLoopPressureDrop,
        Self::FloorLoopLength,
        Self::RadiatorBeyondCatalog,
        Self::NoDesignFlow,
        Self::PumpTooWeak,
        Self::PresettingUnknown,
        Self::ValveCannotDeliver,
        Self::KvAboveLargest,
        Self::KvBelowSmallest,
        Self::TrimOutOfReach,
        Self::LockshieldSettingUnknown,
        Self::PresettingFailed,
        Self::LowAuthority,
        Self::SourceCapacity,
        Self::VesselNotSized,
        Self::VesselsInParallel,
        Self::NetworkInvalid,
        Self::NotConverged,
        Self::FlowOutOfTolerance,
        Self::HotReturn,
        Self::RoomShort,
        Self::PumpOnMaxCurve,
        Self::VelocityOverLimit,
        Self::CircuitConnectionInvalid,
        Self::CircuitFeedShort,
        Self::SeparatorFlowShort,
        Self::CircuitFedTooCold,
        Self::DeviceIgnored,
    ];

    /// Position in [`Self::ALL`] (an exhaustive match: a new kind does not
    /// compile until it is placed, and the test of `ALL` fails until it is
    /// listed there).
    #[must_use]
    pub const fn index(self) -> usize {
        match self {
            Self::NoSource => 0,
            Self::SourceUnconnected => 1,
            Self::LoopClosed => 2,
            Self::EmitterUnreachable => 3,
            Self::NodeUnreachable => 4,
            Self::RunUnreachable => 5,
            Self::DeadEnd => 6,
            Self::HeaderOutletsExceeded => 7,
            Self::ReverseReturnFork => 8,
            Self::DeviceInReverseChain => 9,
            Self::NestedDevice => 10,
            Self::DeviceModelUnknown => 11,
            Self::DeviceSettingUnknown => 12,
            Self::SetpointOutOfRange => 13,
            Self::ControllerSaturated => 14,
            Self::RegulationNotSettled => 15,
            Self::SettingsInvalid => 16,
            Self::WaterPropertyRange => 17,
            Self::PumpCurveInvalid => 18,
            Self::ZeroLoad => 19,
            Self::EmitterDesignFailed => 20,
            Self::ValveFamilyUnknown => 21,
            Self::LockshieldFamilyUnknown => 22,
            Self::NoEmitter => 23,
            Self::PipeSeriesUnknown => 24,
            Self::FixedSizeUnknown => 25,
            Self::SizeLimitsExceeded => 26,
            Self::PipeLawInvalid => 27,
            Self::GradientOverLimit => 28,
            Self::EmitterShortfall => 29,
            Self::FloorSurfaceLimit => 30,
            Self::FloorLoopPressureDrop => 31,
            Self::FloorLoopLength => 32,
            Self::RadiatorBeyondCatalog => 33,
            Self::NoDesignFlow => 34,
            Self::PumpTooWeak => 35,
            Self::PresettingUnknown => 36,
            Self::ValveCannotDeliver => 37,
            Self::KvAboveLargest => 38,
            Self::KvBelowSmallest => 39,
            Self::TrimOutOfReach => 40,
            Self::LockshieldSettingUnknown => 41,
            Self::PresettingFailed => 42,
            Self::LowAuthority => 43,
            Self::SourceCapacity => 44,
            Self::VesselNotSized => 45,
            Self::VesselsInParallel => 46,
            Self::NetworkInvalid => 47,
            Self::NotConverged => 48,
            Self::FlowOutOfTolerance => 49,
            Self::HotReturn => 50,
            Self::RoomShort => 51,
            Self::PumpOnMaxCurve => 52,
            Self::VelocityOverLimit => 53,
            Self::CircuitConnectionInvalid => 54,
            Self::CircuitFeedShort => 55,
            Self::SeparatorFlowShort => 56,
            Self::CircuitFedTooCold => 57,
            Self::DeviceIgnored => 58,
        }
    }

    /// The stable name written to the JSON.
    #[must_use]
    pub fn name(self) -> String {
        serde_json::to_value(self).ok().and_then(|v| v.as_str().map(str::to_owned)).unwrap_or_default()
    }
}

/// The item a finding concerns.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum ItemRef {
    /// The project as a whole.
    Project,
    /// The design settings.
    Settings,
    /// A node (source, junction, header, emitter).
    Node(NodeId),
    /// A run.
    Run(RunId),
}

impl fmt::Display for ItemRef {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::Project => write!(f, "project"),
            Self::Settings => write!(f, "settings"),
            Self::Node(n) => write!(f, "{n}"),
            Self::Run(r) => write!(f, "{r}"),
        }
    }
}

impl Serialize for ItemRef {
    fn serialize<S: serde::Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        s.collect_str(self)
    }
}

/// One finding.
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub struct Finding {
    /// Severity.
    pub severity: Severity,
    /// What it is about.
    pub kind: FindingKind,
    /// The item concerned.
    pub item: ItemRef,
    /// What is wrong and how to fix it. Shared, not copied: an unchanged
    /// warning of the last solve is the same text (a large building has
    /// tens of thousands of them).
    pub message: Arc<str>,
}

impl Finding {
    /// An error.
    #[must_use]
    pub fn error(kind: FindingKind, item: ItemRef, message: impl Into<Arc<str>>) -> Self {
        Self { severity: Severity::Error, kind, item, message: message.into() }
    }
    /// A warning.
    #[must_use]
    pub fn warning(kind: FindingKind, item: ItemRef, message: impl Into<Arc<str>>) -> Self {
        Self { severity: Severity::Warning, kind, item, message: message.into() }
    }
    /// A note.
    #[must_use]
    pub fn note(kind: FindingKind, item: ItemRef, message: impl Into<Arc<str>>) -> Self {
        Self { severity: Severity::Note, kind, item, message: message.into() }
    }
}

mod texts;
pub(crate) use texts::*;

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_kind_is_listed_once_and_documented() {
        let doc = std::fs::read_to_string(concat!(env!("CARGO_MANIFEST_DIR"), "/../docs/solve-json.md")).unwrap();
        for (i, k) in FindingKind::ALL.iter().enumerate() {
            assert_eq!(k.index(), i, "{k:?}");
            let name = k.name();
            assert!(!name.is_empty() && name.chars().all(|c| c.is_ascii_lowercase() || c == '_'), "{name}");
            assert!(doc.contains(&format!("| `{name}` |")), "docs/solve-json.md does not list the finding kind {name}");
        }
    }
}
