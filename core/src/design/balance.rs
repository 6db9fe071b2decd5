//! Stage 3, **balance**: pressures at design flow, the index circuit (the
//! largest pressure drop from pump outlet back to pump inlet with the
//! emitter valves fully open, the index valve taking at least its minimum
//! Δp), the pump set-point and the head available for balancing, each
//! emitter's presetting (Kv needed = Q/√Δp, the step of its valve family,
//! the residual flow error, the authority), the pump law of the operating
//! solve, and the totals: load, water volume, expansion vessel (EN 12828).

use smol_str::SmolStr;

use super::findings::{self, FindingKind};
use super::results::{EmitterResult, PipeResult, PumpResult, Side, Solution};
use super::state::{Derivation, EmitterData, NONE};
use super::topology::Dense;
use super::trim::{CircuitInputs, Settings};
use super::{SolveOptions, Workspace};
use crate::emitters::{CheckOutcome, EmitterDesign, EmitterDetail};
use crate::network::{GRAVITY_M_S2, HydLink, HydNode, LinkLaw, solver};
use crate::project::{DesignSettings, Mode, Node, NodeId, NodeKind, Project};
use crate::pump::{PumpControl, PumpCurve};
use crate::valves;
use crate::vessel;

/// Kv standing for "no resistance" in the valve link of a feed (a pumped
/// circuit seen from its feeding network), m³/h.
const FEED_OPEN_KV_M3_H: f64 = 1000.0;

/// The index circuit and each emitter's circuit pressure drops at design
/// flow.
struct Circuits {
    /// Circuit Δp without the emitter's valve (source → emitter → pump), Pa.
    rest_pa: Vec<f64>,
    /// Δp of the valve fully open at design flow, Pa.
    open_valve_pa: Vec<f64>,
    /// Index into the emitters of the index circuit.
    index: usize,
    /// Index-circuit Δp with the index valve's minimum, Pa.
    index_dp_pa: f64,
}

impl Derivation<'_> {
    /// The balance stage (see the module docs).
    pub(super) fn balance(
        &mut self,
        p: &Project,
        dn: &Dense<'_>,
        opts: &SolveOptions,
        ws: &mut Workspace,
        sol: &mut Solution,
    ) {
        let s = &p.settings;
        let (Some(sp), Some(rp)) = (self.supply_props, self.return_props) else { return };
        let rho_mean = 0.5 * (sp.density_kg_m3 + rp.density_kg_m3);
        // Lockshields fully open in the valve links for the open-valve
        // circuit pressure drops.
        let lockshield_r: Vec<f64> = self
            .emitters
            .iter()
            .map(|e| {
                if e.lockshield_kv.is_finite() {
                    valves::resistance_r_pa_s2_kg2(e.lockshield_kv, rho_mean).unwrap_or(0.0)
                } else {
                    0.0
                }
            })
            .collect();
        let Some(p_node) = self.design_pressures(ws) else { return };
        let Some(c) = self.circuits(s, ws, &p_node, &lockshield_r, rho_mean) else {
            // Emitters whose own design failed (a room above the supply,
            // bad model data) carry an error saying why; the project-level
            // error is for projects whose rooms have no load.
            if !self.findings.iter().any(|f| f.kind == FindingKind::EmitterDesignFailed) {
                self.findings.push(findings::no_design_flow());
            }
            return;
        };
        sol.index_emitter = Some(self.emitters[c.index].id);
        let duty = c.index_dp_pa * (1.0 + s.head_margin_fraction);

        // Pump: control set-point and the head available for balancing.
        let Some(curve) = self.curve else { return };
        let total = self.total_design_kg_s;
        let q_design_m3_h = total / rp.density_kg_m3 * 3600.0;
        let source = self.source.unwrap_or(NodeId(0));
        let control = match (s.mode, self.control) {
            (Mode::DesignFollowsLayout, PumpControl::ConstantDp { .. }) => {
                PumpControl::ConstantDp { setpoint_kpa: duty / 1000.0 }
            }
            (Mode::DesignFollowsLayout, PumpControl::ProportionalDp { .. }) => {
                PumpControl::ProportionalDp { setpoint_kpa: duty / 1000.0 }
            }
            (_, c) => c,
        };
        self.control = control;
        let curve_head_pa = curve.head_kpa(q_design_m3_h).map_or(0.0, |h| h * 1000.0);
        let available =
            control.head_kpa(&curve, q_design_m3_h, q_design_m3_h.max(1e-9)).map_or(curve_head_pa, |h| h * 1000.0);
        if curve_head_pa < duty {
            self.findings.push(findings::pump_too_weak(source, curve_head_pa / 1000.0, q_design_m3_h, duty / 1000.0));
        }
        self.available_pa = available;

        // Balancing devices: each makes its branch a zone whose emitters
        // balance against what the device leaves them.
        let src_dp =
            solver::link_dp(&self.net.links[self.source_link].law, self.total_design_kg_s).map_or(0.0, |x| x.0);
        let zones = self.balance_devices(s, &p_node, &c.rest_pa, &c.open_valve_pa, available, src_dp, sol);

        // Presettings, in id order (the order of `Solution::emitters`):
        // sort the indices, not the (large) results.
        let emitters = std::mem::take(&mut self.emitters);
        let mut by_id: Vec<usize> = (0..emitters.len()).collect();
        by_id.sort_unstable_by_key(|&i| emitters[i].id);
        let mut results = Vec::with_capacity(emitters.len());
        let mut result_emitter = Vec::with_capacity(emitters.len());
        let mut circuit_available = Vec::with_capacity(emitters.len());
        for &i in &by_id {
            let e = &emitters[i];
            let Some(node) = dn.node(e.id) else { continue };
            let NodeKind::Emitter(em) = &node.kind else { continue };
            let m = e.flow_kg_s;
            let q_m3_h = m / sp.density_kg_m3 * 3600.0;
            let mut r = EmitterResult {
                id: e.id,
                name: em.name.as_str().into(),
                level: p.level(node.level).map_or_else(SmolStr::default, |l| l.name.as_str().into()),
                load_w: em.load_w,
                room_c: em.room_c,
                supply_c: s.supply_c,
                design_return_c: e.design.as_ref().map_or(em.room_c, |d| d.outcome.return_c()),
                design_flow_kg_s: m,
                design_flow_l_h: q_m3_h * 1000.0,
                design_output_w: e.design.as_ref().map_or(0.0, |d| d.outcome.output_w()),
                detail: e.design.as_ref().map(|d| d.detail.clone()),
                circuit_dp_open_pa: c.rest_pa[i] + c.open_valve_pa[i],
                circuit_rest_pa: c.rest_pa[i],
                valve_dp_pa: 0.0,
                kv_needed_m3_h: 0.0,
                presetting: SmolStr::new_inline("—"),
                valve_kv_m3_h: 0.0,
                lockshield: SmolStr::default(),
                lockshield_kv_m3_h: 0.0,
                lockshield_dp_pa: 0.0,
                authority: 0.0,
                presetting_flow_error: 0.0,
                flow_kg_s: 0.0,
                flow_l_h: 0.0,
                return_c: em.room_c,
                output_w: 0.0,
                flow_deviation: 0.0,
                flow_within_tolerance: true,
                closed: opts.closed_emitters.contains(&e.id),
            };
            if let Some(d) = e.design.as_ref().filter(|_| e.feed.is_none()) {
                self.emitter_design_findings(node, d.as_ref());
            }
            let mut valve_kv = e.valve.and_then(|v| v.settings.last()).map_or(1.0, |st| st.kv_m3_h);
            if e.feed.is_some() {
                // Its port (the body link) is its whole resistance.
                valve_kv = FEED_OPEN_KV_M3_H;
            }
            let mut lock_kv = e.lockshield_kv;
            r.lockshield = e
                .lockshield
                .and_then(|l| l.settings.last())
                .map_or_else(SmolStr::default, |st| st.label.as_str().into());
            // In a zone: the zone's Δp, the rest from its entry.
            let zone = zones.of_emitter.get(i).copied().flatten();
            let zone_available = zone.map_or(available, |d| zones.available_pa[d]);
            if let (Some(family), true) = (e.valve, m > 0.0) {
                let rest = match zone {
                    Some(d) => zones.rest_in(d, c.rest_pa[i], src_dp, &p_node, &self.devices),
                    None => c.rest_pa[i],
                };
                let inputs = CircuitInputs {
                    available_pa: zone_available,
                    rest_pa: rest,
                    own_rest_pa: self.own_rest_pa(e, ws, lockshield_r[i]).min(rest),
                    lock_open_pa: lockshield_r[i] * m * m,
                    rho_mean,
                    q_m3_h,
                    slot: self.topo.nix(e.id),
                };
                let fixed = (em.valves.presetting.as_deref(), em.valves.lockshield_setting.as_deref());
                let set = Settings { valve: family, lockshield: e.lockshield, fixed, mode: s.mode };
                (valve_kv, lock_kv) = self.trim(node, &em.name, &set, &inputs, s, opts, ws, &mut r);
            }
            r.valve_kv_m3_h = valve_kv;
            r.lockshield_kv_m3_h = lock_kv;
            let r_lock = if lock_kv.is_finite() {
                valves::resistance_r_pa_s2_kg2(lock_kv, rho_mean).unwrap_or(0.0)
            } else {
                0.0
            };
            let r_valve = valves::resistance_r_pa_s2_kg2(valve_kv, rho_mean).unwrap_or(0.0) + r_lock;
            self.net.links[e.valves_link].law = LinkLaw::Quadratic { r_pa_s2_kg2: r_valve };
            if m <= 0.0 || r.closed {
                self.net.links[e.valves_link].closed = true;
            }
            results.push(r);
            result_emitter.push(i);
            circuit_available.push(zone_available);
        }
        self.emitters = emitters;
        self.result_emitter = result_emitter;
        self.circuit_available_pa = circuit_available;
        sol.emitters = results;

        self.set_pump_law(p, dn, &curve, source);
        sol.pump = Some(PumpResult {
            design_flow_kg_s: total,
            design_flow_m3_h: q_design_m3_h,
            index_dp_pa: c.index_dp_pa,
            duty_head_pa: duty,
            available_pa: available,
            control: self.control,
            curve: Some(curve),
            operating_flow_m3_h: q_design_m3_h,
            operating_head_pa: available,
            hydraulic_power_w: 0.0,
            on_max_curve: false,
        });
        self.totals(p, dn, source, sol);
        sol.index_path = self.circuit_links(c.index);
        self.pipe_results(sol, s);
    }

    /// Node pressures at design flows: supply nodes relative to the source
    /// outlet, return nodes relative to the pump suction.
    fn design_pressures(&self, ws: &mut Workspace) -> Option<Vec<f64>> {
        let n_nodes = self.net.nodes.len();
        let mut p_node = vec![f64::NAN; n_nodes];
        let (s_src, r_src) = self.source.and_then(|x| self.pair(x))?;
        p_node[s_src] = 0.0;
        p_node[r_src] = 0.0;
        let static_c = |k: &HydLink, nodes: &[HydNode]| {
            k.density_kg_m3 * GRAVITY_M_S2 * (nodes[k.from].elevation_m - nodes[k.to].elevation_m)
        };
        // Resolve by repeated sweeps over pipe links (trees: each sweep
        // resolves at least one level; the breadth-first order of the runs
        // makes it one sweep, but for reverse-return chains).
        // (tree position, link) in ascending order: built by walking the tree
        // runs in order (a run's supply link precedes its return link), sorted
        // only if that does not hold.
        let mut pending: Vec<(usize, usize)> = Vec::with_capacity(self.pipes.len());
        for (pos, tr) in self.topo.runs.iter().enumerate() {
            let r = self.topo.rix(tr.run);
            for by_run in [&self.supply_link, &self.return_link] {
                if let Some(&l) = by_run.get(r).filter(|&&l| l != NONE) {
                    pending.push((pos, l));
                }
            }
        }
        if pending.len() != self.pipes.len() || !pending.is_sorted() {
            pending.clear();
            pending.extend(self.pipes.iter().map(|pd| (self.topo.run_position(pd.run).unwrap_or(usize::MAX), pd.link)));
            pending.sort_unstable();
        }
        // Balancing devices: resolved with the links of their run.
        for d in &self.devices {
            pending.push((self.topo.run_position(d.run).unwrap_or(usize::MAX), d.link));
        }
        if !self.devices.is_empty() {
            pending.sort_unstable();
        }
        let flows = &self.design_flows;
        ws.link_dps.size_for(self.net.links.len());
        let mut guard = 0;
        while !pending.is_empty() && guard < 2 * n_nodes + 2 {
            guard += 1;
            pending.retain(|&(_, l)| {
                let k = &self.net.links[l];
                let (pf, pt) = (p_node[k.from], p_node[k.to]);
                let mut f = || ws.link_dps.dp(l, &k.law, flows[l]) - static_c(k, &self.net.nodes);
                if pf.is_finite() && !pt.is_finite() {
                    p_node[k.to] = pf - f();
                    false
                } else if pt.is_finite() && !pf.is_finite() {
                    p_node[k.from] = pt + f();
                    false
                } else {
                    !(pf.is_finite() && pt.is_finite())
                }
            });
        }
        Some(p_node)
    }

    /// Each emitter's circuit Δp and the index circuit (`None` when no
    /// emitter has a design flow).
    fn circuits(
        &self,
        s: &DesignSettings,
        ws: &mut Workspace,
        p_node: &[f64],
        lockshield_r: &[f64],
        rho_mean: f64,
    ) -> Option<Circuits> {
        let src_dp =
            solver::link_dp(&self.net.links[self.source_link].law, self.total_design_kg_s).map_or(0.0, |x| x.0);
        let mut rest_pa = vec![0.0; self.emitters.len()];
        let mut open_valve_pa = vec![0.0; self.emitters.len()];
        let mut best: Option<(usize, f64)> = None;
        for (i, e) in self.emitters.iter().enumerate() {
            if e.flow_kg_s <= 0.0 {
                continue;
            }
            let m = e.flow_kg_s;
            let body = ws.link_dps.dp(e.body_link, &self.net.links[e.body_link].law, m);
            let lock = lockshield_r[i] * m * m;
            let (ps, pr) = (p_node[e.s], p_node[e.r]);
            if !(ps.is_finite() && pr.is_finite()) {
                continue;
            }
            rest_pa[i] = src_dp - ps + body + lock + pr;
            let valve_open = e
                .valve
                .and_then(|v| v.settings.last())
                .map_or(0.0, |st| valves::resistance_r_pa_s2_kg2(st.kv_m3_h, rho_mean).unwrap_or(0.0) * m * m);
            open_valve_pa[i] = valve_open;
            let need = rest_pa[i] + valve_open.max(s.min_valve_dp_pa);
            if best.is_none_or(|(_, b)| need > b) {
                best = Some((i, need));
            }
        }
        let (index, index_dp_pa) = best?;
        Some(Circuits { rest_pa, open_valve_pa, index, index_dp_pa })
    }

    /// The emitter's own resistances in series with the valve at design
    /// flow: its connection pipes, body and lockshield, Pa. The shared
    /// pipes upstream carry many circuits, so their Δp barely follows one
    /// circuit's flow error; treating them as a fixed pressure difference
    /// gives a realistic residual for a stepped presetting.
    fn own_rest_pa(&self, e: &EmitterData, ws: &mut Workspace, lockshield_r: f64) -> f64 {
        let m = e.flow_kg_s;
        let conn = self.topo.parent_run_of(e.id);
        let mut pipe_dp = |side: Side| {
            let by_run = if side == Side::Supply { &self.supply_link } else { &self.return_link };
            conn.and_then(|r| by_run.get(self.topo.rix(r)))
                .and_then(|&link| self.net.links.get(link).map(|l| (link, l)))
                .map_or(0.0, |(link, l)| ws.link_dps.dp(link, &l.law, m))
        };
        let (supply_dp, return_dp) = (pipe_dp(Side::Supply), pipe_dp(Side::Return));
        let body = self.net.links.get(e.body_link).map_or(0.0, |l| ws.link_dps.dp(e.body_link, &l.law, m));
        supply_dp + return_dp + body + lockshield_r * m * m
    }

    /// Findings from an emitter's own design.
    fn emitter_design_findings(&mut self, node: &Node, d: &EmitterDesign) {
        if let CheckOutcome::Shortfall { shortfall_w, fraction_delivered, .. } = d.outcome {
            self.findings.push(findings::emitter_shortfall(node, shortfall_w, fraction_delivered));
        }
        match &d.detail {
            EmitterDetail::FloorLoop(f) => {
                if f.exceeds_surface_limit {
                    self.findings.push(findings::floor_surface_limit(node, f.mean_surface_c, f.surface_limit_c));
                }
                if f.exceeds_dp_limit {
                    let limit = crate::emitters::floor::LOOP_DP_LIMIT_PA;
                    self.findings.push(findings::floor_loop_pressure_drop(node, f.loop_dp_pa, limit));
                }
                if f.exceeds_length_limit {
                    self.findings.push(findings::floor_loop_length(node, f.loop_length_m));
                }
            }
            EmitterDetail::Radiator(r) => {
                if !r.fits_catalog {
                    self.findings.push(findings::radiator_beyond_catalog(node, r.required_nominal_w));
                }
            }
            EmitterDetail::Terminal => {}
        }
    }

    /// The pump law of the operating solve: the control law (a set-point
    /// chosen by the design, or stored in installed mode), bounded by the
    /// maximum curve.
    fn set_pump_law(&mut self, p: &Project, dn: &Dense<'_>, curve: &PumpCurve, source: NodeId) {
        let Some(rp) = self.return_props else { return };
        // In installed mode the proportional-Δp line keeps the design flow it
        // was set for (stored by `freeze_edit`).
        let stored_design_kg_s = match dn.node(source).map(|n| &n.kind) {
            Some(NodeKind::Source(src)) if p.settings.mode == Mode::Installed => {
                src.pump.design_flow_m3_h.map(|q| q * rp.density_kg_m3 / 3600.0)
            }
            Some(
                NodeKind::Source(_)
                | NodeKind::Junction
                | NodeKind::Header(_)
                | NodeKind::Emitter(_)
                | NodeKind::Circuit(_)
                | NodeKind::Separator(_),
            )
            | None => None,
        };
        if let Ok((a0, a1, a2)) = crate::pump::to_mass_flow_coefficients(
            curve,
            &self.control,
            rp.density_kg_m3,
            stored_design_kg_s.unwrap_or(self.total_design_kg_s).max(1e-9),
        ) {
            // A controlled pump never gives more than its curve at full
            // speed: the operating law is the lower of the two.
            let max_curve_pa = match self.control {
                PumpControl::FixedSpeed => None,
                PumpControl::ConstantDp { .. } | PumpControl::ProportionalDp { .. } => {
                    let (c0, c1, c2) = crate::pump::curve_in_mass_flow(curve, rp.density_kg_m3);
                    Some([c0, c1, c2])
                }
            };
            let linear_beyond_kg_s = crate::pump::curve_linear_beyond_kg_s(curve, rp.density_kg_m3);
            self.net.links[self.pump_link].law =
                LinkLaw::Pump { a0_pa: a0, a1_pa_s_kg: a1, a2_pa_s2_kg2: a2, max_curve_pa, linear_beyond_kg_s };
        }
        self.net.reference_pressure_pa = 0.0;
    }

    /// Heat load, source capacity, water volume, expansion vessel.
    fn totals(&mut self, p: &Project, dn: &Dense<'_>, source: NodeId, sol: &mut Solution) {
        sol.heat_load_w = self
            .emitters
            .iter()
            .filter_map(|e| dn.node(e.id))
            .map(|n| match &n.kind {
                NodeKind::Emitter(em) => em.load_w,
                NodeKind::Source(_)
                | NodeKind::Junction
                | NodeKind::Header(_)
                | NodeKind::Circuit(_)
                | NodeKind::Separator(_) => 0.0,
            })
            .sum();
        let Some(NodeKind::Source(src)) = dn.node(source).map(|n| &n.kind) else { return };
        if src.capacity_w < sol.heat_load_w {
            self.findings.push(findings::source_capacity(source, src.capacity_w, sol.heat_load_w));
        }
        let pipes_l: f64 = self
            .pipes
            .iter()
            .filter_map(|pd| {
                pd.series.and_then(|s| s.sizes.get(pd.size)).map(|z| z.water_content_l_per_m() * pd.length_m)
            })
            .sum();
        let emitters_l: f64 =
            self.emitters.iter().filter_map(|e| e.design.as_ref()).map(|d| d.installed.water_content_l).sum();
        sol.water_volume_l = pipes_l + emitters_l + src.water_content_l;
        sol.vessel = size_vessel(p, source, sol.water_volume_l, self.findings);
    }

    /// Links of the circuit through emitter `i`: source, supply path,
    /// emitter, return path, pump — in flow order.
    fn circuit_links(&self, i: usize) -> Vec<usize> {
        let Some(e) = self.emitters.get(i) else { return Vec::new() };
        // Walk the supply tree up from the emitter's supply node, and the
        // return tree down from its return node to the suction.
        let n_nodes = self.net.nodes.len();
        let mut into = vec![NONE; n_nodes]; // supply: node -> link feeding it
        let mut out_of = vec![NONE; n_nodes]; // return: node -> link leaving it
        for pd in &self.pipes {
            let k = &self.net.links[pd.link];
            match pd.side {
                Side::Supply => into[k.to] = pd.link,
                Side::Return => out_of[k.from] = pd.link,
            }
        }
        for d in &self.devices {
            out_of[d.inlet] = d.link;
        }
        let mut supply = Vec::new();
        let mut n = e.s;
        while let Some(&l) = into.get(n).filter(|&&l| l != NONE) {
            supply.push(l);
            n = self.net.links[l].from;
            if supply.len() > self.net.links.len() {
                break;
            }
        }
        supply.reverse();
        let mut path = vec![self.source_link];
        path.extend(supply);
        path.push(e.valves_link);
        path.push(e.body_link);
        let mut n = e.r;
        let mut guard = 0;
        while let Some(&l) = out_of.get(n).filter(|&&l| l != NONE) {
            path.push(l);
            n = self.net.links[l].to;
            guard += 1;
            if guard > self.net.links.len() {
                break;
            }
        }
        path.push(self.pump_link);
        path
    }

    /// The design-side pipe results (sizes, ζ, design flows, geometry); the
    /// flow-dependent fields are filled by the operating stage.
    fn pipe_results(&self, sol: &mut Solution, s: &DesignSettings) {
        let (Some(sp), Some(rp)) = (self.supply_props, self.return_props) else { return };
        // Sized up front: a filtered iterator would grow the vector by
        // doubling, copying the large records each time.
        let mut pipes = Vec::with_capacity(self.pipes.len());
        pipes.extend(self.pipes.iter().filter_map(|pd| {
            let series = pd.series?;
            let size = series.sizes.get(pd.size)?;
            let props = if pd.side == Side::Supply { sp } else { rp };
            let zeta = match &self.net.links[pd.link].law {
                LinkLaw::Pipe(h) => h.zeta_sum,
                LinkLaw::Quadratic { .. } | LinkLaw::Pump { .. } => 0.0,
            };
            let riser = if pd.vertical { super::RISER_BENDS_PER_VERTICAL_RUN } else { 0 };
            Some(PipeResult {
                run: pd.run,
                side: pd.side,
                class: pd.class,
                length_m: pd.length_m,
                series: series.id.as_str(),
                size: size.label.as_str(),
                inner_mm: size.inner_diameter_m() * 1000.0,
                zeta,
                temperature_c: props.temperature_c,
                design_flow_kg_s: self.design_flows.get(pd.link).copied().unwrap_or(0.0),
                flow_kg_s: 0.0,
                flow_l_h: 0.0,
                velocity_m_s: 0.0,
                velocity_limit_m_s: *s.velocity_limit_m_s.get(pd.class),
                gradient_limit_pa_m: pd.gradient_limit_pa_m,
                gradient_pa_m: 0.0,
                dp_pa: 0.0,
                link: pd.link,
                ends: pd.ends,
                bends_90: pd.bends_90 + riser,
                bends_45: pd.bends_45,
            })
        }));
        sol.pipes = pipes;
    }
}

/// The expansion vessel (EN 12828) for `water_volume_l` with the vessel at
/// the source: static height from the source to the highest node (or as
/// set), sized for the highest flow temperature the source can reach, not
/// the design supply (the water expands that far).
/// The expansion vessel for the source's system, with a finding when it
/// cannot be sized or takes several vessels.
pub(super) fn size_vessel(
    p: &Project,
    source: NodeId,
    water_volume_l: f64,
    found: &mut Vec<findings::Finding>,
) -> Option<vessel::VesselSizing> {
    let s = &p.settings;
    let static_height = s.static_height_m.unwrap_or_else(|| p.static_height_above_m(source));
    let max_flow_c = match p.node(source).map(|n| &n.kind) {
        Some(NodeKind::Source(src)) => src.max_flow_temperature_c(s.supply_c),
        _ => s.supply_c + crate::project::DEFAULT_MAX_FLOW_ABOVE_DESIGN_K,
    };
    let mut input = vessel::VesselInput::new(water_volume_l, max_flow_c, static_height, s.safety_valve_bar);
    input.fill_temperature_c = s.fill_temperature_c;
    match vessel::size_expansion_vessel(&input) {
        Ok(v) => {
            let n = vessel::vessels_in_parallel(v.nominal_volume_l);
            if n > 1 {
                found.push(findings::vessels_in_parallel(v.nominal_volume_l, v.expansion_volume_l, n));
            }
            Some(v)
        }
        Err(e) => {
            found.push(findings::vessel_not_sized(&e));
            None
        }
    }
}
