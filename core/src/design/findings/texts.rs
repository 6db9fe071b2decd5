//! Every finding text of the design chain, one builder per kind: each
//! names the item, the amount and the fix.

use std::fmt;
use std::sync::Arc;

use super::{Finding, FindingKind, ItemRef};
use crate::project::{Node, NodeId, PipeClass, RunId};

// ---------------------------------------------------------------------------
// Layout (topology)
// ---------------------------------------------------------------------------

pub(crate) fn no_source() -> Finding {
    Finding::error(
        FindingKind::NoSource,
        ItemRef::Project,
        "the project has no heat source — place one with the Source tool and draw a run from it",
    )
}

pub(crate) fn source_unconnected(source: NodeId) -> Finding {
    Finding::error(
        FindingKind::SourceUnconnected,
        ItemRef::Node(source),
        "the heat source has no run — draw a run from it to a junction, header or emitter",
    )
}

pub(crate) fn loop_closed(run: RunId, loop_runs: &str) -> Finding {
    Finding::error(
        FindingKind::LoopClosed,
        ItemRef::Run(run),
        format!(
            "run {run} closes a loop in the drawn network (loop-closing runs: {loop_runs}) — a two-pipe layout is \
             drawn as a tree from the source; delete the run or one of the loop's runs. Emitters in \
             series on one pipe (a one-pipe loop) are outside flowrise's scope"
        ),
    )
}

pub(crate) fn emitter_unreachable(node: &Node) -> Finding {
    Finding::error(
        FindingKind::EmitterUnreachable,
        ItemRef::Node(node.id),
        format!(
            "{} is not connected to the heat source — draw a run from it to a junction or header of the network",
            node.label()
        ),
    )
}

pub(crate) fn node_unreachable(node: &Node) -> Finding {
    Finding::warning(
        FindingKind::NodeUnreachable,
        ItemRef::Node(node.id),
        format!("{} is not connected to the heat source — connect it or delete it", node.label()),
    )
}

pub(crate) fn run_unreachable(run: RunId) -> Finding {
    Finding::warning(
        FindingKind::RunUnreachable,
        ItemRef::Run(run),
        format!("run {run} is not connected to the heat source — connect it or delete it"),
    )
}

pub(crate) fn dead_end(node: &Node) -> Finding {
    Finding::warning(
        FindingKind::DeadEnd,
        ItemRef::Node(node.id),
        format!("{} is a dead end: no emitter downstream, so it carries no flow", node.label()),
    )
}

pub(crate) fn header_outlets_exceeded(node: &Node, runs: usize, outlets: u32) -> Finding {
    Finding::warning(
        FindingKind::HeaderOutletsExceeded,
        ItemRef::Node(node.id),
        format!("{} has {runs} outlet runs but {outlets} outlets — raise its outlet count", node.label()),
    )
}

pub(crate) fn reverse_return_fork(at: NodeId, label: &str) -> Finding {
    Finding::warning(
        FindingKind::ReverseReturnFork,
        ItemRef::Node(at),
        format!(
            "reverse return needs one trunk, but the branch forks at {label} — this branch is derived \
             as direct return; give the forks their own reverse-return start or use direct return"
        ),
    )
}

pub(crate) fn device_in_reverse_chain(run: RunId) -> Finding {
    Finding::warning(
        FindingKind::DeviceInReverseChain,
        ItemRef::Run(run),
        format!(
            "run {run}: a balancing device on a reverse-return chain has no branch return of its own and is left out — \
             put it on the run feeding the chain"
        ),
    )
}

pub(crate) fn nested_device(run: RunId, outer: RunId) -> Finding {
    Finding::warning(
        FindingKind::NestedDevice,
        ItemRef::Run(run),
        format!(
            "run {run}: its balancing device lies in the branch of the device on run {outer} and is left out (one level \
             of branch devices) — remove one of them"
        ),
    )
}

pub(crate) fn device_model_unknown(run: RunId, what: &str) -> Finding {
    Finding::error(
        FindingKind::DeviceModelUnknown,
        ItemRef::Run(run),
        format!("run {run}: the {what}'s model is not in the catalog — pick one, or leave it to the design"),
    )
}

pub(crate) fn presetting_unknown_on_run(run: RunId, label: &str, family: &str) -> Finding {
    Finding::error(
        FindingKind::DeviceSettingUnknown,
        ItemRef::Run(run),
        format!("run {run}: balancing-valve setting {label} is not a step of {family} — pick one of its steps"),
    )
}

pub(crate) fn setpoint_out_of_range(run: RunId, family: &str, sp_pa: f64, lo_pa: f64, hi_pa: f64) -> Finding {
    Finding::warning(
        FindingKind::SetpointOutOfRange,
        ItemRef::Run(run),
        format!(
            "run {run}: the Δp controller's set-point {:.1} kPa is outside the {:.0}–{:.0} kPa of {family}; it is set \
             to the nearest end — choose a model with a suitable range",
            sp_pa / 1000.0,
            lo_pa / 1000.0,
            hi_pa / 1000.0
        ),
    )
}

/// The design's set-point below the model's range: the controller is set to
/// its lowest and holds a little more than its branch needs; the branch's
/// valves are trimmed against what it holds, so its rooms still get their
/// flows (a note, not a warning).
pub(crate) fn setpoint_below_range(run: RunId, family: &str, sp_pa: f64, lo_pa: f64) -> Finding {
    Finding::note(
        FindingKind::SetpointOutOfRange,
        ItemRef::Run(run),
        format!(
            "run {run}: the branch needs a Δp controller set-point of {:.1} kPa, below the lowest {:.1} kPa of {family}; \
             it is set to {:.1} kPa and the branch's valves take the extra {:.1} kPa",
            sp_pa / 1000.0,
            lo_pa / 1000.0,
            lo_pa / 1000.0,
            (lo_pa - sp_pa) / 1000.0
        ),
    )
}

pub(crate) fn controller_saturated(run: RunId, family: &str, target_pa: f64, held_pa: f64) -> Finding {
    Finding::warning(
        FindingKind::ControllerSaturated,
        ItemRef::Run(run),
        format!(
            "run {run}: the Δp controller ({family}) is fully open and holds only {:.1} kPa of its {:.1} kPa, {:.1} kPa \
             short — its branch gets less than its design flows; raise the pump head or choose a controller with a \
             larger Kvs",
            held_pa / 1000.0,
            target_pa / 1000.0,
            (target_pa - held_pa) / 1000.0
        ),
    )
}

pub(crate) fn regulation_not_settled(rounds: usize) -> Finding {
    Finding::warning(
        FindingKind::RegulationNotSettled,
        ItemRef::Project,
        format!(
            "the Δp controllers did not settle in {rounds} rounds — their branches' flows are approximate; check for \
             controllers whose branches are nearly closed"
        ),
    )
}

pub(crate) fn device_flow_out_of_tolerance(
    run: RunId,
    kind: &str,
    flow_l_h: f64,
    design_l_h: f64,
    deviation: f64,
    tolerance: f64,
    installed: bool,
) -> Finding {
    let fix = if installed { "re-set it" } else { "its steps cannot come closer: choose a valve with finer steps" };
    Finding::warning(
        FindingKind::FlowOutOfTolerance,
        ItemRef::Run(run),
        format!(
            "run {run}: the {kind} passes {flow_l_h:.0} l/h, {:+.0} % of its design flow {design_l_h:.0} l/h, outside the \
             ±{:.0} % tolerance — {fix}",
            deviation * 100.0,
            tolerance * 100.0
        ),
    )
}

// ---------------------------------------------------------------------------
// Inputs
// ---------------------------------------------------------------------------

pub(crate) fn settings_invalid(field: &str, message: &str) -> Finding {
    Finding::error(FindingKind::SettingsInvalid, ItemRef::Settings, format!("{field}: {message}"))
}

pub(crate) fn water_property_range() -> Finding {
    Finding::error(
        FindingKind::WaterPropertyRange,
        ItemRef::Settings,
        "design temperatures outside the water-property range",
    )
}

pub(crate) fn pump_curve_invalid(source: NodeId, error: &dyn fmt::Display) -> Finding {
    Finding::error(
        FindingKind::PumpCurveInvalid,
        ItemRef::Node(source),
        format!("pump curve: {error} — correct the three curve points"),
    )
}

pub(crate) fn zero_load(node: &Node) -> Finding {
    Finding::warning(
        FindingKind::ZeroLoad,
        ItemRef::Node(node.id),
        format!("{} has zero load — give it the room's heat load (it gets no flow)", node.label()),
    )
}

pub(crate) fn emitter_design_failed(node: &Node, error: &dyn fmt::Display) -> Finding {
    Finding::error(FindingKind::EmitterDesignFailed, ItemRef::Node(node.id), format!("{}: {error}", node.label()))
}

pub(crate) fn valve_family_unknown(node: &Node, error: &dyn fmt::Display) -> Finding {
    Finding::error(
        FindingKind::ValveFamilyUnknown,
        ItemRef::Node(node.id),
        format!("{}: valve family: {error} — pick a valve family from the catalog", node.label()),
    )
}

pub(crate) fn lockshield_family_unknown(node: &Node, error: &dyn fmt::Display) -> Finding {
    Finding::error(
        FindingKind::LockshieldFamilyUnknown,
        ItemRef::Node(node.id),
        format!("{}: lockshield family: {error} — pick a lockshield from the catalog", node.label()),
    )
}

pub(crate) fn no_emitter() -> Finding {
    Finding::error(
        FindingKind::NoEmitter,
        ItemRef::Project,
        "no emitter is connected to the heat source — place emitters and draw runs to them",
    )
}

// ---------------------------------------------------------------------------
// Sizing
// ---------------------------------------------------------------------------

pub(crate) fn pipe_series_unknown(class: PipeClass, error: &dyn fmt::Display) -> Finding {
    Finding::error(
        FindingKind::PipeSeriesUnknown,
        ItemRef::Settings,
        format!("pipe series for {}: {error}", class.name()),
    )
}

pub(crate) fn fixed_size_unknown(run: RunId, label: &str, series: &str) -> Finding {
    Finding::error(
        FindingKind::FixedSizeUnknown,
        ItemRef::Run(run),
        format!("run {run}: fixed size {label} is not in {series} — pick one of its sizes"),
    )
}

/// The text of [`FindingKind::SizeLimitsExceeded`] (cached per run).
pub(crate) fn size_limits_exceeded_text(
    run: RunId,
    largest: &str,
    series: &str,
    class: PipeClass,
    flow_l_h: f64,
) -> String {
    format!(
        "run {run}: even the largest size {largest} of {series} exceeds the {} limits at {flow_l_h:.0} l/h — \
         choose a series with larger sizes or split the load",
        class.name(),
    )
}

pub(crate) fn size_limits_exceeded(run: RunId, message: Arc<str>) -> Finding {
    Finding::warning(FindingKind::SizeLimitsExceeded, ItemRef::Run(run), message)
}

pub(crate) fn gradient_over_limit(run: RunId, side: &str, size: &str, gradient: f64, limit: f64) -> Finding {
    Finding::warning(
        FindingKind::GradientOverLimit,
        ItemRef::Run(run),
        format!(
            "run {run} {side}: its fixed size {size} gives {gradient:.0} Pa/m at the design flow, above the {limit:.0} Pa/m \
             limit (common practice) — clear the fixed size or choose a larger one"
        ),
    )
}

pub(crate) fn pipe_law_invalid(run: RunId, error: &dyn fmt::Display) -> Finding {
    Finding::error(FindingKind::PipeLawInvalid, ItemRef::Run(run), format!("run {run}: {error}"))
}

// ---------------------------------------------------------------------------
// Emitters
// ---------------------------------------------------------------------------

pub(crate) fn emitter_shortfall(node: &Node, shortfall_w: f64, fraction_delivered: f64) -> Finding {
    Finding::warning(
        FindingKind::EmitterShortfall,
        ItemRef::Node(node.id),
        format!(
            "{} falls short by {shortfall_w:.0} W ({:.0} % of the load delivered) at the design temperatures — \
             a larger emitter or a higher supply temperature is needed",
            node.label(),
            fraction_delivered * 100.0
        ),
    )
}

pub(crate) fn floor_surface_limit(node: &Node, surface_c: f64, limit_c: f64) -> Finding {
    Finding::warning(
        FindingKind::FloorSurfaceLimit,
        ItemRef::Node(node.id),
        format!(
            "{}: floor surface {surface_c:.1} °C exceeds the EN 1264 limit {limit_c:.0} °C — add area (edge zone, wall \
             heating) or a supplementary emitter",
            node.label(),
        ),
    )
}

pub(crate) fn floor_loop_pressure_drop(node: &Node, loop_dp_pa: f64, limit_pa: f64) -> Finding {
    Finding::warning(
        FindingKind::FloorLoopPressureDrop,
        ItemRef::Node(node.id),
        format!(
            "{}: loop pressure drop {:.1} kPa exceeds {:.0} kPa (common practice) — split it into two loops",
            node.label(),
            loop_dp_pa / 1000.0,
            limit_pa / 1000.0
        ),
    )
}

pub(crate) fn floor_loop_length(node: &Node, length_m: f64) -> Finding {
    Finding::warning(
        FindingKind::FloorLoopLength,
        ItemRef::Node(node.id),
        format!(
            "{}: loop length {length_m:.0} m is long (common practice limit) — split it into two loops",
            node.label()
        ),
    )
}

pub(crate) fn radiator_beyond_catalog(node: &Node, required_nominal_w: f64) -> Finding {
    Finding::warning(
        FindingKind::RadiatorBeyondCatalog,
        ItemRef::Node(node.id),
        format!(
            "{}: needs {required_nominal_w:.0} W nominal, more than the longest radiator of its type and height — choose \
             a taller or deeper type, or two radiators",
            node.label(),
        ),
    )
}

// ---------------------------------------------------------------------------
// Balancing and pump
// ---------------------------------------------------------------------------

pub(crate) fn no_design_flow() -> Finding {
    Finding::error(
        FindingKind::NoDesignFlow,
        ItemRef::Project,
        "no emitter has a design flow — give the rooms their loads",
    )
}

pub(crate) fn pump_too_weak(source: NodeId, curve_kpa: f64, flow_m3_h: f64, duty_kpa: f64) -> Finding {
    Finding::warning(
        FindingKind::PumpTooWeak,
        ItemRef::Node(source),
        format!(
            "pump too weak: its curve gives {curve_kpa:.1} kPa at the design flow {flow_m3_h:.2} m³/h but the index \
             circuit needs {duty_kpa:.1} kPa with margin — choose a larger pump or reduce the index circuit's pressure \
             drop"
        ),
    )
}

pub(crate) fn presetting_unknown(node: &Node, label: &str, family: &str) -> Finding {
    Finding::error(
        FindingKind::PresettingUnknown,
        ItemRef::Node(node.id),
        format!("{}: presetting {label} is not a step of {family} — pick one of its steps", node.label()),
    )
}

pub(crate) fn valve_cannot_deliver(node: &Node) -> Finding {
    Finding::warning(
        FindingKind::ValveCannotDeliver,
        ItemRef::Node(node.id),
        format!("{}: the pump head cannot drive the design flow even with the valve fully open", node.label()),
    )
}

/// The text of [`FindingKind::KvAboveLargest`] (cached per emitter).
pub(crate) fn kv_above_largest_text(
    node: &Node,
    kv_needed: f64,
    family: &str,
    kv_largest: f64,
    flow_share: f64,
) -> String {
    format!(
        "{}: needs Kv {kv_needed:.3} but {family} with its lockshield open gives only {kv_largest:.3} — the room gets \
         about {:.0} % of its flow; choose a valve with a larger Kv or lower the circuit's resistance",
        node.label(),
        flow_share * 100.0
    )
}

/// The text of [`FindingKind::KvBelowSmallest`] (cached per emitter).
pub(crate) fn kv_below_smallest_text(node: &Node, kv_needed: f64, kv_smallest: f64, flow_share: f64) -> String {
    format!(
        "{}: needs Kv {kv_needed:.3}, below the smallest presetting with the lockshield nearly closed ({kv_smallest:.3}) \
         — the room gets about {:.0} % of its flow; choose a valve with smaller Kv steps or add resistance to the \
         circuit",
        node.label(),
        flow_share * 100.0
    )
}

/// The text of [`FindingKind::TrimOutOfReach`] (cached per emitter).
pub(crate) fn trim_out_of_reach_text(
    node: &Node,
    valve: &str,
    lockshield: &str,
    tolerance: f64,
    presetting: &str,
    lock_setting: &str,
    error: f64,
) -> String {
    format!(
        "{}: no presetting of {valve} with a setting of {lockshield} brings the flow within ±{:.0} % of design (the \
         closest pair, presetting {presetting} with the lockshield at {lock_setting}, gives {:+.0} %) — choose a valve \
         family with finer steps or a continuous presetting",
        node.label(),
        tolerance * 100.0,
        error * 100.0
    )
}

pub(crate) fn lockshield_setting_unknown(node: &Node, label: &str, family: &str) -> Finding {
    Finding::error(
        FindingKind::LockshieldSettingUnknown,
        ItemRef::Node(node.id),
        format!("{}: lockshield setting {label} is not a step of {family} — pick one of its steps", node.label()),
    )
}

pub(crate) fn presetting_failed(node: &Node, error: &dyn fmt::Display) -> Finding {
    Finding::error(FindingKind::PresettingFailed, ItemRef::Node(node.id), format!("{}: {error}", node.label()))
}

/// The text of [`FindingKind::LowAuthority`] (cached per emitter). The
/// authority is printed rounded down, so it never reads as equal to the
/// limit it is below.
pub(crate) fn low_authority_text(node: &Node, authority: f64, limit: f64) -> String {
    let shown = (authority * 100.0).floor() / 100.0;
    format!(
        "{}: valve authority {shown:.2} is below {limit:.2} (common practice) — the valve has little control; \
         reduce the pump head or the circuit's other resistances",
        node.label(),
    )
}

pub(crate) fn source_capacity(source: NodeId, capacity_w: f64, load_w: f64) -> Finding {
    Finding::warning(
        FindingKind::SourceCapacity,
        ItemRef::Node(source),
        format!(
            "the source's capacity {} is below the total load {} — choose a larger source",
            crate::project::limits::readable_power(capacity_w),
            crate::project::limits::readable_power(load_w)
        ),
    )
}

pub(crate) fn vessel_not_sized(error: &dyn fmt::Display) -> Finding {
    Finding::warning(FindingKind::VesselNotSized, ItemRef::Settings, format!("expansion vessel: {error}"))
}

pub(crate) fn vessels_in_parallel(nominal_l: f64, expansion_l: f64, vessels: u32) -> Finding {
    Finding::note(
        FindingKind::VesselsInParallel,
        ItemRef::Settings,
        format!(
            "expansion vessel: a nominal volume of {nominal_l:.0} l is more than one membrane vessel holds (about \
             {:.0} l, common practice) — {vessels} vessels in parallel on one connection adding up to at least \
             {nominal_l:.0} l, or a pump-pressurisation unit for an expansion volume of {expansion_l:.0} l",
            crate::vessel::LARGEST_MEMBRANE_VESSEL_L
        ),
    )
}

// ---------------------------------------------------------------------------
// Operating solve
// ---------------------------------------------------------------------------

pub(crate) fn network_invalid(error: &dyn fmt::Display) -> Finding {
    Finding::error(FindingKind::NetworkInvalid, ItemRef::Project, format!("network: {error}"))
}

pub(crate) fn not_converged(iterations: usize, detail: &str) -> Finding {
    Finding::error(
        FindingKind::NotConverged,
        ItemRef::Project,
        format!(
            "the operating solve did not converge in {iterations} iterations{detail} — check for closed valves isolating \
             emitters, a pump far too weak, or extreme resistances"
        ),
    )
}

/// An emitter's flow outside the tolerance, with its output when it falls
/// short and what to do about it.
#[allow(clippy::too_many_arguments)] // reason: the numbers the message states
pub(crate) fn flow_out_of_tolerance(
    node: &Node,
    flow_l_h: f64,
    design_l_h: f64,
    deviation: f64,
    tolerance: f64,
    output_w: f64,
    load_w: f64,
    installed: bool,
) -> Finding {
    let short =
        if output_w < load_w - 0.5 { format!(" and delivers {output_w:.0} W of {load_w:.0} W") } else { String::new() };
    let fix = if installed {
        "re-trim its presetting and lockshield (switch to design follows layout to have them chosen)"
    } else if deviation < 0.0 {
        "its valves are open as far as the pair allows: lower the circuit's resistance or raise the pump head"
    } else {
        "its valves cannot throttle it further: choose a valve family with finer steps or add resistance"
    };
    Finding::warning(
        FindingKind::FlowOutOfTolerance,
        ItemRef::Node(node.id),
        format!(
            "{} gets {flow_l_h:.1} l/h, {:+.0} % of its design flow {design_l_h:.1} l/h{short}, outside the ±{:.0} % \
             tolerance — {fix}",
            node.label(),
            deviation * 100.0,
            tolerance * 100.0
        ),
    )
}

pub(crate) fn hot_return(node: &Node, return_c: f64, design_return_c: f64, margin_k: f64) -> Finding {
    Finding::warning(
        FindingKind::HotReturn,
        ItemRef::Node(node.id),
        format!(
            "{}: returns {return_c:.1} °C, more than {margin_k:.0} K above the design return {design_return_c:.1} °C — \
             the emitter is oversupplied; fit a return-temperature limiter or lower its presetting",
            node.label()
        ),
    )
}

pub(crate) fn room_short(id: NodeId, name: &str, flow_share: f64, output_w: f64, load_w: f64) -> Finding {
    Finding::warning(
        FindingKind::RoomShort,
        ItemRef::Node(id),
        format!(
            "{name} gets {:.0} % of its design flow and delivers {output_w:.0} W of {load_w:.0} W",
            flow_share * 100.0
        ),
    )
}

pub(crate) fn pump_on_max_curve(source: NodeId, flow_m3_h: f64, curve_kpa: f64, control_kpa: f64) -> Finding {
    Finding::warning(
        FindingKind::PumpOnMaxCurve,
        ItemRef::Node(source),
        format!(
            "the pump cannot hold its set-point: at {flow_m3_h:.2} m³/h its maximum curve gives {curve_kpa:.1} kPa, the \
             control asks {control_kpa:.1} kPa — it runs on its maximum curve and the flows are those of full speed; \
             choose a larger pump or lower the set-point"
        ),
    )
}

pub(crate) fn velocity_over_limit(
    run: RunId,
    side: &str,
    velocity: f64,
    size: &str,
    class: PipeClass,
    limit: f64,
) -> Finding {
    // Enough digits that the excess shows: a pipe sized to the limit at
    // its design flow and run a little above it by a constant-Δp pump is
    // over by a fraction of a per cent, which "1.20 m/s exceeds 1.20 m/s"
    // would hide.
    let over_pct = (velocity / limit.max(1e-9) - 1.0) * 100.0;
    let over = if over_pct < 1.0 { format!("{over_pct:.2} %") } else { format!("{over_pct:.0} %") };
    Finding::warning(
        FindingKind::VelocityOverLimit,
        ItemRef::Run(run),
        format!(
            "run {run}{side}: {velocity:.3} m/s in {size} is {over} over the {} limit of {limit:.2} m/s — use a larger \
             size or clear its fixed size",
            class.name(),
        ),
    )
}

pub(crate) fn circuit_connection_invalid(node: &Node, why: &str) -> Finding {
    Finding::error(FindingKind::CircuitConnectionInvalid, ItemRef::Node(node.id), format!("{}: {why}", node.label()))
}

pub(crate) fn circuit_feed_short(node: &Node, available_kpa: f64, needed_kpa: f64, flow_l_h: f64) -> Finding {
    Finding::warning(
        FindingKind::CircuitFeedShort,
        ItemRef::Node(node.id),
        format!(
            "{}: the feeding network gives {available_kpa:.1} kPa at the circuit, its valve needs {needed_kpa:.1} kPa fully \
             open to pass the primary flow {flow_l_h:.0} l/h — the circuit's supply temperature will sag; raise the feeding \
             pump's head, choose a valve with a larger Kvs or lower the resistance upstream",
            node.label()
        ),
    )
}

pub(crate) fn separator_flow_short(node: &Node, primary_l_h: f64, drawn_l_h: f64, mixed_supply_c: f64) -> Finding {
    Finding::warning(
        FindingKind::SeparatorFlowShort,
        ItemRef::Node(node.id),
        format!(
            "{}: the primary loop brings {primary_l_h:.0} l/h, its circuits draw {drawn_l_h:.0} l/h — return water rises \
             through the separator and their supply drops to about {mixed_supply_c:.1} °C; raise the primary flow (pump or \
             balancing) to at least what the circuits draw",
            node.label()
        ),
    )
}

pub(crate) fn circuit_fed_too_cold(node: &Node, supply_c: f64, feed_c: f64) -> Finding {
    Finding::warning(
        FindingKind::CircuitFedTooCold,
        ItemRef::Node(node.id),
        format!(
            "{}: set for a {supply_c} °C supply but fed at {feed_c} °C — its valve stands fully open and it runs at \
             {feed_c} °C; lower its supply or raise the feed's",
            node.label()
        ),
    )
}

pub(crate) fn device_ignored(run: RunId, why: &str) -> Finding {
    Finding::warning(
        FindingKind::DeviceIgnored,
        ItemRef::Run(run),
        format!("run {run}: its balancing device has no effect: {why}"),
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_velocity_just_over_its_limit_says_by_how_much() {
        let f = velocity_over_limit(RunId(3), "", 1.2006, "DN700", PipeClass::Main, 1.2);
        assert!(f.message.contains("1.201 m/s in DN700 is 0.05 % over"), "{}", f.message);
        let f = velocity_over_limit(RunId(3), " return", 1.5, "DN20", PipeClass::Main, 1.2);
        assert!(f.message.contains("R3 return: 1.500 m/s in DN20 is 25 % over"), "{}", f.message);
    }
}
