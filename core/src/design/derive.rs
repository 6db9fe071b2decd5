//! Stage 1, **derive**: the topology of the drawn layout, each emitter's
//! own design (flow, return temperature, hydraulic body) and the flat
//! hydraulic network the later stages size, balance and solve.
//!
//! Two network nodes (supply, return) per layout node, three per emitter
//! (supply, between valves and body, return); links: a supply and a return
//! pipe per run (direct return: the return runs back along the supply; in
//! a reverse-return chain the first run's return is the home pipe from the
//! chain's end to its start and the others join the chain nodes in supply
//! order), the emitter valves (valve + lockshield in series) and body, the
//! source (its Kv) and the pump. The reference node is the source's return,
//! the pump suction, where the expansion vessel holds the pressure.

use super::Workspace;
use super::findings;
use super::results::{LinkRole, Side};
use super::state::{Derivation, DeviceData, EmitterData, FamilyMemo, NONE, NewPipe};
use super::topology::{self, Dense};
use crate::emitters::{BodyHydraulics, DesignTemperatures};
use crate::friction::PipeHydraulics;
use crate::network::LinkLaw;
use crate::project::{NodeId, NodeKind, PipeClass, PlanPoint, Project, Run};
use crate::valves;
use crate::water;

/// A turn of at least this many degrees in a drawn run counts as a 90°
/// bend (common practice for reading bends off a plan).
pub const BEND_90_MIN_DEG: f64 = 60.0;
/// A turn of at least this many degrees (and below [`BEND_90_MIN_DEG`])
/// counts as a 45° bend; smaller turns as straight.
pub const BEND_45_MIN_DEG: f64 = 20.0;
/// Bends the design assumes per vertical run and side: the riser's foot and
/// head (an assumption, stated in the report and the parts list).
pub const RISER_BENDS_PER_VERTICAL_RUN: u32 = 2;

impl Derivation<'_> {
    /// Topology, emitter design, network skeleton. False when the design
    /// cannot go on (errors recorded as findings).
    #[allow(clippy::too_many_lines)] // reason: the derivation is one sequence of steps
    pub(super) fn derive(&mut self, p: &Project, dn: &Dense<'_>, ws: &mut Workspace) -> bool {
        let s = &p.settings;
        let problems = s.problems();
        for pr in &problems {
            self.findings.push(findings::settings_invalid(pr.field, &pr.message));
        }
        if !problems.is_empty() {
            return false;
        }
        let (topo, f) = topology::analyse_dense(p, dn);
        self.findings.extend(f);
        self.topo = topo;
        let Some(source) = self.topo.source else { return false };
        // Sized once (a vector that outgrows its reserve doubles, copying
        // itself into fresh pages and keeping up to twice the room): two
        // nodes per tree node, one more per emitter and per balancing
        // device; two links per run, two per emitter, one per device, the
        // source's and the pump's.
        let devices =
            self.topo.runs.iter().filter(|tr| dn.run(tr.run).is_some_and(|r| r.props.device.is_some())).count();
        let emitters = self.topo.emitters.len();
        self.net.nodes.reserve(2 * self.topo.order.len() + emitters + devices + 1);
        let links = 2 * self.topo.runs.len() + 2 * emitters + devices + 2;
        self.net.links.reserve(links);
        self.roles.reserve(links);
        self.pipes.reserve(2 * self.topo.runs.len());
        self.emitters.reserve(self.topo.emitters.len());
        self.source = Some(source);
        let (Ok(sp), Ok(rp)) = (water::properties(s.supply_c), water::properties(s.return_c)) else {
            self.findings.push(findings::water_property_range());
            return false;
        };
        self.supply_props = Some(sp);
        self.return_props = Some(rp);
        let mean_rho = 0.5 * (sp.density_kg_m3 + rp.density_kg_m3);
        let Ok(mp) = water::properties(0.5 * (s.supply_c + s.return_c)) else { return false };

        // Node pairs for the source and every reachable non-emitter node.
        self.pairs = vec![(NONE, NONE); self.topo.node_slots()];
        let order = self.topo.order.clone();
        for &n in &order {
            let Some(node) = dn.node(n) else { continue };
            match node.kind {
                NodeKind::Emitter(_) => continue,
                NodeKind::Source(_)
                | NodeKind::Junction
                | NodeKind::Header(_)
                | NodeKind::Circuit(_)
                | NodeKind::Separator(_) => {}
            }
            let z = dn.elevation_m(n);
            let a = self.add_node(z);
            let b = self.add_node(z);
            let slot = self.topo.nix(n);
            if let Some(x) = self.pairs.get_mut(slot) {
                *x = (a, b);
            }
        }
        let Some((s_src, r_src)) = self.pair(source) else { return false };
        self.net.reference_node = r_src;
        let z_src = dn.elevation_m(source);
        let pump_out = self.add_node(z_src);

        // Source and pump links.
        let Some(NodeKind::Source(src)) = dn.node(source).map(|n| &n.kind) else { return false };
        let r_source = valves::resistance_r_pa_s2_kg2(src.kv_m3_h, sp.density_kg_m3).unwrap_or(0.0);
        self.source_link = self.add_link(
            pump_out,
            s_src,
            sp.density_kg_m3,
            LinkLaw::Quadratic { r_pa_s2_kg2: r_source },
            LinkRole::Source(source),
        );
        self.pump_link = self.add_link(
            r_src,
            pump_out,
            rp.density_kg_m3,
            LinkLaw::Pump {
                a0_pa: 0.0,
                a1_pa_s_kg: 0.0,
                a2_pa_s2_kg2: 0.0,
                max_curve_pa: None,
                linear_beyond_kg_s: f64::INFINITY,
            },
            LinkRole::Pump(source),
        );
        match crate::pump::PumpCurve::from_three_points(src.pump.curve_points) {
            Ok(c) => self.curve = Some(c),
            Err(e) => {
                self.findings.push(findings::pump_curve_invalid(source, &e));
                return false;
            }
        }
        self.control = src.pump.control;

        // Emitters: design flows and their three nodes.
        let mut family_memo = FamilyMemo::default();
        let emitters = self.topo.emitters.clone();
        for &e in &emitters {
            let Some(node) = dn.node(e) else { continue };
            let NodeKind::Emitter(em) = &node.kind else { continue };
            let z = dn.elevation_m(e);
            let (ns, nm, nr) = (self.add_node(z), self.add_node(z), self.add_node(z));
            let temps = DesignTemperatures {
                min_drop_k: s.min_water_drop_k,
                ..DesignTemperatures::new(s.supply_c, s.return_c, em.room_c)
            };
            let design = if em.load_w <= 0.0 {
                self.findings.push(findings::zero_load(node));
                None
            } else {
                match ws.emitters.design(e, p.node_count(), &em.model, em.load_w, &temps) {
                    Ok(d) => Some(d),
                    Err(err) => {
                        self.findings.push(findings::emitter_design_failed(node, &err));
                        None
                    }
                }
            };
            let flow = design.as_ref().map_or(0.0, |d| d.outcome.mass_flow_kg_s());
            let feed = self.feeds.get(&e).copied();
            // A feed has its control valve in its body, no emitter valves.
            let valve = match family_memo.get(&em.valves.valve_family) {
                _ if feed.is_some() => None,
                Ok(v) => Some(v),
                Err(err) => {
                    self.findings.push(findings::valve_family_unknown(node, &err));
                    None
                }
            };
            let (lockshield, lockshield_kv) = match family_memo.get(&em.valves.lockshield_family) {
                _ if feed.is_some() => (None, f64::INFINITY),
                Ok(v) => (Some(v), v.settings.last().map_or(v.kvs_fully_open, |st| st.kv_m3_h)),
                Err(err) => {
                    self.findings.push(findings::lockshield_family_unknown(node, &err));
                    (None, f64::INFINITY)
                }
            };
            let vl =
                self.add_link(ns, nm, mean_rho, LinkLaw::Quadratic { r_pa_s2_kg2: 0.0 }, LinkRole::EmitterValves(e));
            let body_law = match design.as_ref().map(|d| d.installed.body) {
                // A floor loop's pipe at the network's mean water temperature
                // (not the emitter's own design mean, which jumps when the
                // emitter reaches its flow cap): the loop's resistance then
                // moves smoothly with the supply temperature.
                Some(BodyHydraulics::Pipe(ph)) => LinkLaw::Pipe(
                    PipeHydraulics::new(
                        ph.length_m,
                        ph.inner_diameter_m,
                        ph.roughness_m,
                        ph.zeta_sum,
                        mp.density_kg_m3,
                        mp.viscosity_pa_s,
                    )
                    .unwrap_or(ph),
                ),
                Some(BodyHydraulics::Quadratic { r_pa_s2_kg2 }) => LinkLaw::Quadratic { r_pa_s2_kg2 },
                None => LinkLaw::Quadratic { r_pa_s2_kg2: 0.0 },
            };
            let bl = self.add_link(nm, nr, mean_rho, body_law, LinkRole::EmitterBody(e));
            self.emitters.push(EmitterData {
                id: e,
                s: ns,
                r: nr,
                valves_link: vl,
                body_link: bl,
                design,
                flow_kg_s: flow,
                valve,
                lockshield,
                lockshield_kv,
                feed,
            });
        }
        if self.emitters.is_empty() {
            self.findings.push(findings::no_emitter());
            return false;
        }

        // Pipes: supply for every tree run; return direct or along a
        // reverse-return chain.
        for e in &self.emitters {
            let slot = self.topo.nix(e.id);
            if let Some(x) = self.pairs.get_mut(slot) {
                *x = (e.s, e.r);
            }
        }
        self.add_pipes(dn, sp.density_kg_m3, rp.density_kg_m3);
        self.order_pipes_by_run();
        self.supply_link = vec![NONE; self.topo.run_slots()];
        self.supply_pipe = vec![NONE; self.topo.run_slots()];
        self.return_link = vec![NONE; self.topo.run_slots()];
        for (i, pd) in self.pipes.iter().enumerate() {
            let r = self.topo.rix(pd.run);
            match pd.side {
                Side::Supply => {
                    if let (Some(l), Some(x)) = (self.supply_link.get_mut(r), self.supply_pipe.get_mut(r)) {
                        *l = pd.link;
                        *x = i;
                    }
                }
                Side::Return => {
                    if let Some(l) = self.return_link.get_mut(r) {
                        *l = pd.link;
                    }
                }
            }
        }
        true
    }

    /// The supply and return pipes of every tree run (see the module docs).
    fn add_pipes(&mut self, dn: &Dense<'_>, supply_rho: f64, return_rho: f64) {
        let topo_map = self.topo.clone_maps();
        let ends = |n: NodeId, pairs: &[(usize, usize)]| pairs.get(topo_map.0.ix(n.0)).copied().filter(|x| x.0 != NONE);
        let mut in_chain = vec![false; self.topo.run_slots()];
        for ch in &self.topo.reverse_chains {
            for r in &ch.runs {
                if let Some(x) = in_chain.get_mut(self.topo.rix(*r)) {
                    *x = true;
                }
            }
        }
        let tree_runs = self.topo.runs.clone();
        for tr in &tree_runs {
            let Some(run) = dn.run(tr.run) else { continue };
            let (Some((su, ru)), Some((sd, rd))) = (ends(tr.up, &self.pairs), ends(tr.down, &self.pairs)) else {
                continue;
            };
            let class = self.topo.class_of(tr.run).unwrap_or(PipeClass::Branch);
            let supply = NewPipe {
                run: tr.run,
                side: Side::Supply,
                class,
                from: su,
                to: sd,
                ends: [tr.up, tr.down],
                length_m: dn.length_m(run),
                bends: bends_dense(dn, run),
                vertical: dn.is_vertical(run),
                density_kg_m3: supply_rho,
            };
            self.add_pipe(supply);
            let chained = in_chain.get(topo_map.1.ix(tr.run.0)).copied().unwrap_or(false);
            if !chained {
                // A balancing device sits on the return at the run's upstream
                // end: the return pipe ends at its inlet X, the device joins X
                // to the upstream node's return.
                let device = run.props.device.as_ref().filter(|_| self.device_allowed(dn, tr));
                let to = match device {
                    Some(_) => self.add_node(dn.elevation_m(tr.up)),
                    None => ru,
                };
                self.add_pipe(NewPipe { side: Side::Return, from: rd, to, density_kg_m3: return_rho, ..supply });
                if let Some(device) = device {
                    let link = self.add_link(
                        to,
                        ru,
                        return_rho,
                        LinkLaw::Quadratic { r_pa_s2_kg2: 0.0 },
                        LinkRole::Device(tr.run),
                    );
                    self.devices.push(DeviceData {
                        run: tr.run,
                        down: tr.down,
                        device: device.clone(),
                        link,
                        inlet: to,
                        entry_supply: su,
                        entry_return: ru,
                        valve: None,
                        controller: None,
                        setpoint_pa: 0.0,
                        flow_kg_s: 0.0,
                        result: NONE,
                    });
                }
            } else if run.props.device.is_some() {
                self.findings.push(findings::device_in_reverse_chain(tr.run));
            }
        }
        let chains = self.topo.reverse_chains.clone();
        for ch in &chains {
            // Chain nodes J0 (start), J1..Jk.
            let mut nodes = vec![ch.start];
            let mut total_len = 0.0;
            for &r in &ch.runs {
                let Some(tr) = self.topo.tree_run(r) else { continue };
                nodes.push(tr.down);
                total_len += dn.run(r).map_or(0.0, |run| dn.length_m(run));
            }
            for (i, &r) in ch.runs.iter().enumerate() {
                let Some(run) = dn.run(r) else { continue };
                let class = self.topo.class_of(r).unwrap_or(PipeClass::Branch);
                let (from, to, end_nodes, length_m, bends) = if i == 0 {
                    // The first run's return is the home pipe from the chain's
                    // end back to its start, alongside the whole chain.
                    let (Some(&last), Some(&first)) = (nodes.last(), nodes.first()) else { continue };
                    let (Some((_, r_last)), Some((_, r_first))) = (ends(last, &self.pairs), ends(first, &self.pairs))
                    else {
                        continue;
                    };
                    let bends = ch
                        .runs
                        .iter()
                        .filter_map(|&x| dn.run(x))
                        .map(|x| bends_dense(dn, x))
                        .fold((0, 0), |a, b| (a.0 + b.0, a.1 + b.1));
                    (r_last, r_first, [last, first], total_len, bends)
                } else {
                    // `get`: a chain run without a tree run (never built by the
                    // topology) skips instead of indexing past the end.
                    let (Some(&na), Some(&nb)) = (nodes.get(i), nodes.get(i + 1)) else { continue };
                    let (Some((_, ra)), Some((_, rb))) = (ends(na, &self.pairs), ends(nb, &self.pairs)) else {
                        continue;
                    };
                    (ra, rb, [na, nb], dn.length_m(run), bends_dense(dn, run))
                };
                self.add_pipe(NewPipe {
                    run: r,
                    side: Side::Return,
                    class,
                    from,
                    to,
                    ends: end_nodes,
                    length_m,
                    bends,
                    vertical: dn.is_vertical(run),
                    density_kg_m3: return_rho,
                });
            }
        }
    }

    /// Whether the device of tree run `tr` can be derived: not inside the
    /// branch of another device (one level of branch devices; a finding
    /// otherwise).
    fn device_allowed(&mut self, dn: &Dense<'_>, tr: &super::topology::TreeRun) -> bool {
        let mut at = tr.up;
        let mut guard = 0;
        while let Some(r) = self.topo.parent_run_of(at) {
            if dn.run(r).is_some_and(|run| run.props.device.is_some()) {
                self.findings.push(findings::nested_device(tr.run, r));
                return false;
            }
            let Some(parent) = self.topo.tree_run(r) else { break };
            at = parent.up;
            guard += 1;
            if guard > self.topo.runs.len() {
                break;
            }
        }
        true
    }

    /// Puts `pipes` in (run id, side) order — the order of the results. Run
    /// slots follow run ids, and a run has at most one supply and one return
    /// pipe, so each pipe has its own bucket: a linear pass instead of a
    /// comparison sort. A repeated (run, side), which the derivation never
    /// builds, falls back to the sort.
    fn order_pipes_by_run(&mut self) {
        let slots = self.topo.run_slots();
        let mut bucket = vec![NONE; 2 * slots];
        let mut unique = true;
        for (i, pd) in self.pipes.iter().enumerate() {
            let b = 2 * self.topo.rix(pd.run) + usize::from(pd.side == Side::Return);
            match bucket.get_mut(b) {
                Some(x) if *x == NONE => *x = i,
                _ => unique = false,
            }
        }
        if !unique {
            // (run, side) is unique per pipe: an unstable sort gives the same order.
            self.pipes.sort_unstable_by_key(|p| (p.run, p.side));
            return;
        }
        // Sized up front: collecting a filtered iterator would grow by
        // doubling and copy the records each time.
        let mut ordered = Vec::with_capacity(self.pipes.len());
        ordered.extend(bucket.iter().filter(|&&i| i != NONE).map(|&i| self.pipes[i]));
        self.pipes = ordered;
    }
}

/// Bends along a run's polyline in 90° equivalents: a turn of
/// [`BEND_90_MIN_DEG`] or more counts as a 90° bend, from
/// [`BEND_45_MIN_DEG`] as half of one (a 45° bend), less as straight.
pub fn bend_count(p: &Project, run: &Run) -> f64 {
    let (n90, n45) = bends_in_run(p, run);
    f64::from(n90) + 0.5 * f64::from(n45)
}

/// 90° and 45° bends along a run's polyline (see [`bend_count`]).
#[must_use]
pub fn bends_in_run(p: &Project, run: &Run) -> (u32, u32) {
    let (Some(a), Some(b)) = (p.node(run.a), p.node(run.b)) else { return (0, 0) };
    bends_along(a.pos, &run.vertices, b.pos)
}

/// [`bends_in_run`] with the project's nodes looked up in `dn`.
pub(super) fn bends_dense(dn: &Dense<'_>, run: &Run) -> (u32, u32) {
    let (Some(a), Some(b)) = (dn.node(run.a), dn.node(run.b)) else { return (0, 0) };
    bends_along(a.pos, &run.vertices, b.pos)
}

/// 90° and 45° bends of the polyline `a` → `vertices` → `b`.
fn bends_along(a: PlanPoint, vertices: &[PlanPoint], b: PlanPoint) -> (u32, u32) {
    if vertices.is_empty() {
        return (0, 0);
    }
    let mut pts = Vec::with_capacity(vertices.len() + 2);
    pts.push(a);
    pts.extend_from_slice(vertices);
    pts.push(b);
    let (mut n90, mut n45) = (0, 0);
    for w in pts.windows(3) {
        let (u, v) = ((w[1].x_m - w[0].x_m, w[1].y_m - w[0].y_m), (w[2].x_m - w[1].x_m, w[2].y_m - w[1].y_m));
        let (lu, lv) = (u.0.hypot(u.1), v.0.hypot(v.1));
        if lu <= 0.0 || lv <= 0.0 {
            continue;
        }
        let cos = ((u.0 * v.0 + u.1 * v.1) / (lu * lv)).clamp(-1.0, 1.0);
        let turn = cos.acos().to_degrees();
        if turn >= BEND_90_MIN_DEG {
            n90 += 1;
        } else if turn >= BEND_45_MIN_DEG {
            n45 += 1;
        }
    }
    (n90, n45)
}
