//! Topology of the drawn layout: the supply tree from the heat source, pipe
//! classes, reverse-return chains and the findings about connectivity.

use super::findings::{self, Finding};
use crate::project::{Node, NodeId, NodeKind, PipeClass, Project, ReturnLayout, Run, RunId};

/// Marks "none" in the dense index vectors.
const NONE: usize = usize::MAX;

/// Id → slot of the dense vectors: the id itself while ids are dense (they
/// are allocated consecutively), else the rank among the sorted ids (a file
/// may carry arbitrary ids).
#[derive(Debug, Clone, Default)]
pub(crate) enum IdMap {
    /// Slot = id, for ids below the bound.
    #[default]
    Empty,
    /// Slot = id, for ids below the bound.
    Direct(usize),
    /// Slot = position in the sorted ids.
    Sorted(Vec<u32>),
}

impl IdMap {
    fn new(sorted_ids: &[u32]) -> Self {
        let bound = sorted_ids.last().map_or(0, |&m| m as usize + 1);
        if bound == 0 {
            Self::Empty
        } else if bound <= 4 * sorted_ids.len() + 1024 {
            Self::Direct(bound)
        } else {
            Self::Sorted(sorted_ids.to_vec())
        }
    }

    /// Number of slots.
    pub(crate) fn len(&self) -> usize {
        match self {
            Self::Empty => 0,
            Self::Direct(n) => *n,
            Self::Sorted(v) => v.len(),
        }
    }

    /// Slot of `id` (`NONE` when it has none).
    pub(crate) fn ix(&self, id: u32) -> usize {
        match self {
            Self::Empty => NONE,
            Self::Direct(n) => {
                if (id as usize) < *n {
                    id as usize
                } else {
                    NONE
                }
            }
            Self::Sorted(v) => v.binary_search(&id).unwrap_or(NONE),
        }
    }
}

/// The project's nodes and runs in vectors indexed by id, with each node's
/// runs and elevation: the lookups of the derivation without ordered-map
/// searches. Built in one pass over the project (ids are allocated
/// consecutively, so the vectors are dense).
pub(crate) struct Dense<'a> {
    node_map: IdMap,
    run_map: IdMap,
    nodes: Vec<Option<&'a Node>>,
    runs: Vec<Option<&'a Run>>,
    elevation_m: Vec<f64>,
    /// Runs at each node (CSR by node id), in run-id order.
    adj_ptr: Vec<usize>,
    adj_run: Vec<RunId>,
}

impl<'a> Dense<'a> {
    /// Index `p`.
    pub(crate) fn new(p: &'a Project) -> Self {
        // `nodes()` and `runs()` come in id order.
        let node_ids: Vec<u32> = p.nodes().map(|n| n.id.0).collect();
        let run_ids: Vec<u32> = p.runs().map(|r| r.id.0).collect();
        let (node_map, run_map) = (IdMap::new(&node_ids), IdMap::new(&run_ids));
        let (n_len, r_len) = (node_map.len(), run_map.len());
        let mut nodes = vec![None; n_len];
        let mut elevation_m = vec![0.0; n_len];
        for n in p.nodes() {
            let v = node_map.ix(n.id.0);
            if let (Some(x), Some(z)) = (nodes.get_mut(v), elevation_m.get_mut(v)) {
                *x = Some(n);
                *z = p.level(n.level).map_or(0.0, |l| l.elevation_m);
            }
        }
        let mut runs = vec![None; r_len];
        let mut adj_ptr = vec![0usize; n_len + 1];
        for r in p.runs() {
            if let Some(x) = runs.get_mut(run_map.ix(r.id.0)) {
                *x = Some(r);
            }
            for end in [r.a, r.b] {
                if let Some(c) = adj_ptr.get_mut(node_map.ix(end.0).wrapping_add(1)) {
                    *c += 1;
                }
            }
        }
        for i in 0..n_len {
            adj_ptr[i + 1] += adj_ptr[i];
        }
        let mut fill = adj_ptr.clone();
        let mut adj_run = vec![RunId(0); adj_ptr[n_len]];
        // Runs come in id order, so each node's list is sorted by run id.
        for r in p.runs() {
            let ends: &[NodeId] = if r.a == r.b { &[r.a] } else { &[r.a, r.b] };
            for end in ends {
                if let Some(f) = fill.get_mut(node_map.ix(end.0)) {
                    adj_run[*f] = r.id;
                    *f += 1;
                }
            }
        }
        // A self-loop was counted twice but stored once: its node's tail
        // slot stays RunId(0); drop such slots by truncating the list below.
        let mut out = Self { node_map, run_map, nodes, runs, elevation_m, adj_ptr, adj_run };
        out.fix_self_loops(&fill);
        out
    }

    fn fix_self_loops(&mut self, fill: &[usize]) {
        if fill.iter().zip(self.adj_ptr.iter().skip(1)).all(|(f, e)| f == e) {
            return;
        }
        let mut ptr = vec![0usize; self.adj_ptr.len()];
        let mut runs = Vec::with_capacity(self.adj_run.len());
        for v in 0..self.nodes.len() {
            runs.extend_from_slice(&self.adj_run[self.adj_ptr[v]..fill[v]]);
            ptr[v + 1] = runs.len();
        }
        self.adj_ptr = ptr;
        self.adj_run = runs;
    }

    /// Node `id`.
    pub(crate) fn node(&self, id: NodeId) -> Option<&'a Node> {
        self.nodes.get(self.node_map.ix(id.0)).copied().flatten()
    }

    /// Run `id`.
    pub(crate) fn run(&self, id: RunId) -> Option<&'a Run> {
        self.runs.get(self.run_map.ix(id.0)).copied().flatten()
    }

    /// Runs at node `id`, sorted by id (as [`Project::runs_at`]).
    pub(crate) fn runs_at(&self, id: NodeId) -> &[RunId] {
        let v = self.node_map.ix(id.0);
        match (self.adj_ptr.get(v), self.adj_ptr.get(v.wrapping_add(1))) {
            (Some(&a), Some(&b)) => &self.adj_run[a..b],
            _ => &[],
        }
    }

    /// Elevation of node `id` (as [`Project::elevation_m`]).
    pub(crate) fn elevation_m(&self, id: NodeId) -> f64 {
        self.elevation_m.get(self.node_map.ix(id.0)).copied().unwrap_or(0.0)
    }

    /// The other end of `run` seen from `from` (as [`Project::other_end`]).
    pub(crate) fn other_end(&self, run: RunId, from: NodeId) -> Option<NodeId> {
        let r = self.run(run)?;
        if r.a == from {
            Some(r.b)
        } else if r.b == from {
            Some(r.a)
        } else {
            None
        }
    }

    /// Hydraulic length of a run (as [`Project::length_m`], same arithmetic).
    pub(crate) fn length_m(&self, run: &Run) -> f64 {
        run.props.length_override_m.unwrap_or_else(|| {
            let (Some(a), Some(b)) = (self.node(run.a), self.node(run.b)) else { return 0.0 };
            crate::project::plan_length_m(a.pos, &run.vertices, b.pos)
                + (self.elevation_m(run.a) - self.elevation_m(run.b)).abs()
        })
    }

    /// True when the run joins two levels (as [`Project::is_vertical`]).
    pub(crate) fn is_vertical(&self, run: &Run) -> bool {
        match (self.node(run.a), self.node(run.b)) {
            (Some(a), Some(b)) => a.level != b.level,
            _ => false,
        }
    }

    fn is_emitter(&self, id: NodeId) -> bool {
        matches!(self.node(id).map(|x| &x.kind), Some(NodeKind::Emitter(_)))
    }

    /// Size of the vectors indexed by node id.
    pub(crate) fn node_slots(&self) -> usize {
        self.nodes.len()
    }

    /// Size of the vectors indexed by run id.
    pub(crate) fn run_slots(&self) -> usize {
        self.runs.len()
    }
}

/// A run oriented away from the source.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct TreeRun {
    /// The run.
    pub run: RunId,
    /// Upstream end (towards the source).
    pub up: NodeId,
    /// Downstream end.
    pub down: NodeId,
}

/// A reverse-return chain: the return of runs `runs` (in supply order) runs
/// with the supply and comes home from the chain's end.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct ReverseChain {
    /// Node where the chain starts (its return home pipe ends here).
    pub start: NodeId,
    /// Trunk runs in supply order.
    pub runs: Vec<RunId>,
}

/// The oriented supply tree of a project.
#[derive(Debug, Clone, Default)]
pub struct Topology {
    /// The heat source.
    pub source: Option<NodeId>,
    /// Reachable nodes in breadth-first order from the source.
    pub order: Vec<NodeId>,
    /// Tree runs in the same order as their downstream node in `order`.
    pub runs: Vec<TreeRun>,
    /// Reachable emitters, in depth-first supply order.
    pub emitters: Vec<NodeId>,
    /// Reverse-return chains.
    pub reverse_chains: Vec<ReverseChain>,
    /// Runs left out because they close a loop.
    pub loop_runs: Vec<RunId>,
    /// Node id → slot and run id → slot of the vectors below.
    node_map: IdMap,
    run_map: IdMap,
    /// Index into `runs` of each tree run, by run slot (`NONE` if not in the tree).
    run_pos: Vec<usize>,
    /// Index into `runs` of the run feeding each node, by node id.
    parent_pos: Vec<usize>,
    /// Range of `runs` holding each node's children (contiguous, by run
    /// id), by node id.
    child_range: Vec<(usize, usize)>,
    /// Pipe class of `runs[i]`.
    class_pos: Vec<PipeClass>,
}

impl Topology {
    /// Slot of node `n` in the vectors indexed by node (`NONE` if none).
    pub(crate) fn nix(&self, n: NodeId) -> usize {
        self.node_map.ix(n.0)
    }

    /// Slot of run `r` in the vectors indexed by run (`NONE` if none).
    pub(crate) fn rix(&self, r: RunId) -> usize {
        self.run_map.ix(r.0)
    }

    /// The node and run id maps.
    pub(crate) fn clone_maps(&self) -> (IdMap, IdMap) {
        (self.node_map.clone(), self.run_map.clone())
    }

    /// Number of node slots.
    pub(crate) fn node_slots(&self) -> usize {
        self.node_map.len()
    }

    /// Number of run slots.
    pub(crate) fn run_slots(&self) -> usize {
        self.run_map.len()
    }

    /// The oriented tree run of `run`, if it is in the tree.
    #[must_use]
    pub fn tree_run(&self, run: RunId) -> Option<TreeRun> {
        self.run_pos.get(self.rix(run)).and_then(|&i| self.runs.get(i)).copied()
    }

    /// Position of tree run `run` in `runs` (breadth-first order).
    pub(crate) fn run_position(&self, run: RunId) -> Option<usize> {
        self.run_pos.get(self.rix(run)).copied().filter(|&i| i != NONE)
    }

    /// The run feeding node `n` (`None` for the source and nodes outside
    /// the tree).
    #[must_use]
    pub fn parent_run_of(&self, n: NodeId) -> Option<RunId> {
        self.parent_pos.get(self.nix(n)).and_then(|&i| self.runs.get(i)).map(|t| t.run)
    }

    /// The tree runs leaving node `n`, sorted by run id.
    #[must_use]
    pub fn children_of(&self, n: NodeId) -> &[TreeRun] {
        self.child_range.get(self.nix(n)).and_then(|&(a, b)| self.runs.get(a..b)).unwrap_or(&[])
    }

    /// Pipe class of tree run `run`.
    #[must_use]
    pub fn class_of(&self, run: RunId) -> Option<PipeClass> {
        self.run_pos.get(self.rix(run)).and_then(|&i| self.class_pos.get(i)).copied()
    }

    /// Node `root` and every node downstream of it in the supply tree,
    /// breadth first.
    #[must_use]
    pub fn subtree(&self, root: NodeId) -> Vec<NodeId> {
        let mut out = vec![root];
        let mut i = 0;
        while i < out.len() {
            out.extend(self.children_of(out[i]).iter().map(|tr| tr.down));
            i += 1;
        }
        out
    }
}

/// Analyse the layout: orient runs away from the source, classify them, find
/// reverse-return chains; every problem becomes a finding naming the items.
#[must_use]
pub fn analyse(p: &Project) -> (Topology, Vec<Finding>) {
    analyse_dense(p, &Dense::new(p))
}

/// [`analyse`] on an index of the project already built.
#[allow(clippy::too_many_lines)] // reason: one pass with its findings reads best together
pub(crate) fn analyse_dense(p: &Project, d: &Dense<'_>) -> (Topology, Vec<Finding>) {
    let mut t = Topology::default();
    let mut findings = Vec::new();
    let sources = p.sources();
    let Some(&source) = sources.first() else {
        findings.push(findings::no_source());
        return (t, findings);
    };
    t.source = Some(source);
    if d.runs_at(source).is_empty() {
        findings.push(findings::source_unconnected(source));
    }
    t.node_map = d.node_map.clone();
    t.run_map = d.run_map.clone();
    let (n_slots, r_slots) = (d.node_slots(), d.run_slots());
    t.run_pos = vec![NONE; r_slots];
    t.parent_pos = vec![NONE; n_slots];
    t.child_range = vec![(0, 0); n_slots];

    // Breadth-first from the source; a run that reaches a node already seen
    // closes a loop.
    let mut seen = vec![false; n_slots];
    let mut used_runs = vec![false; r_slots];
    let mark = |v: &mut Vec<bool>, i: usize| {
        if let Some(x) = v.get_mut(i) {
            *x = true;
        }
    };
    let is = |v: &Vec<bool>, i: usize| v.get(i).copied().unwrap_or(false);
    let mut head = 0usize;
    t.order.push(source);
    mark(&mut seen, t.nix(source));
    while head < t.order.len() {
        let n = t.order[head];
        head += 1;
        let is_emitter = d.is_emitter(n);
        let first_child = t.runs.len();
        for &run in d.runs_at(n) {
            if is(&used_runs, t.rix(run)) {
                continue;
            }
            mark(&mut used_runs, t.rix(run));
            let Some(other) = d.other_end(run, n) else { continue };
            if is(&seen, t.nix(other)) {
                t.loop_runs.push(run);
                continue;
            }
            if is_emitter && n != source {
                // An emitter is a leaf: its one run is its parent run. (Edits
                // and loading refuse a second run, so this is defensive.)
                continue;
            }
            mark(&mut seen, t.nix(other));
            let slot = t.nix(other);
            if let Some(x) = t.parent_pos.get_mut(slot) {
                *x = t.runs.len();
            }
            let slot = t.rix(run);
            if let Some(x) = t.run_pos.get_mut(slot) {
                *x = t.runs.len();
            }
            t.runs.push(TreeRun { run, up: n, down: other });
            t.order.push(other);
        }
        let slot = t.nix(n);
        if let Some(x) = t.child_range.get_mut(slot) {
            *x = (first_child, t.runs.len());
        }
    }
    if !t.loop_runs.is_empty() {
        t.loop_runs.sort_unstable();
        let names: Vec<String> = t.loop_runs.iter().map(ToString::to_string).collect();
        let names = names.join(", ");
        for &r in &t.loop_runs {
            findings.push(findings::loop_closed(r, &names));
        }
    }

    // Unreachable items.
    for n in p.nodes() {
        if is(&seen, t.nix(n.id)) {
            continue;
        }
        match &n.kind {
            NodeKind::Emitter(_) => findings.push(findings::emitter_unreachable(n)),
            NodeKind::Source(_)
            | NodeKind::Junction
            | NodeKind::Header(_)
            | NodeKind::Circuit(_)
            | NodeKind::Separator(_) => {
                findings.push(findings::node_unreachable(n));
            }
        }
    }
    for r in p.runs() {
        if !is(&used_runs, t.rix(r.id)) {
            findings.push(findings::run_unreachable(r.id));
        }
    }

    // Depth-first order of emitters (supply order along each branch).
    let mut stack = vec![source];
    while let Some(n) = stack.pop() {
        if d.is_emitter(n) {
            t.emitters.push(n);
        }
        for tr in t.children_of(n).iter().rev() {
            stack.push(tr.down);
        }
    }

    // Dead ends: a junction or header with nothing downstream.
    for &n in &t.order {
        let Some(node) = d.node(n) else { continue };
        let outlets = t.children_of(n).len();
        if matches!(node.kind, NodeKind::Junction | NodeKind::Header(_) | NodeKind::Circuit(_) | NodeKind::Separator(_))
            && outlets == 0
        {
            findings.push(findings::dead_end(node));
        }
        if let NodeKind::Header(h) = &node.kind
            && outlets > h.outlets as usize
        {
            findings.push(findings::header_outlets_exceeded(node, outlets, h.outlets));
        }
    }

    // Pipe classes: connection if it ends at an emitter; main if vertical,
    // from the source, or feeding a vertical run further down; else branch.
    let mut feeds_vertical = vec![false; n_slots];
    for tr in t.runs.iter().rev() {
        let below = is(&feeds_vertical, t.nix(tr.down));
        let vertical = d.run(tr.run).is_some_and(|r| d.is_vertical(r));
        if below || vertical {
            mark(&mut feeds_vertical, t.nix(tr.up));
        }
    }
    t.class_pos = Vec::with_capacity(t.runs.len());
    for tr in &t.runs {
        let Some(run) = d.run(tr.run) else {
            t.class_pos.push(PipeClass::Branch);
            continue;
        };
        let auto = if d.is_emitter(tr.down) {
            PipeClass::Connection
        } else if d.is_vertical(run) || tr.up == source || is(&feeds_vertical, t.nix(tr.down)) {
            PipeClass::Main
        } else {
            PipeClass::Branch
        };
        t.class_pos.push(run.props.class.unwrap_or(auto));
    }
    // Effective return layout per run (inherited down the tree) and the
    // reverse-return chains.
    let mut layout: Vec<ReturnLayout> = Vec::with_capacity(t.runs.len());
    for tr in &t.runs {
        let inherited =
            t.parent_pos.get(t.nix(tr.up)).and_then(|&i| layout.get(i).copied()).unwrap_or(p.settings.return_layout);
        let own = d.run(tr.run).and_then(|r| r.props.return_layout).unwrap_or(inherited);
        layout.push(own);
    }
    let layout_of = |r: RunId| t.run_pos.get(t.rix(r)).and_then(|&i| layout.get(i)).copied();
    let is_trunk_node =
        |n: NodeId| matches!(d.node(n).map(|x| &x.kind), Some(NodeKind::Junction | NodeKind::Header(_)));
    let mut chains = Vec::new();
    for (i, tr) in t.runs.iter().enumerate() {
        if layout.get(i) != Some(&ReturnLayout::Reverse) || !is_trunk_node(tr.down) {
            continue;
        }
        // A chain starts where the upstream run is not reverse (or at the source).
        let upstream_reverse = t.parent_run_of(tr.up).is_some_and(|pr| {
            layout_of(pr) == Some(ReturnLayout::Reverse) && t.tree_run(pr).is_some_and(|ptr| is_trunk_node(ptr.down))
        });
        if upstream_reverse {
            continue;
        }
        let mut chain = ReverseChain { start: tr.up, runs: vec![tr.run] };
        let mut at = tr.down;
        let mut forked = false;
        loop {
            let trunk: Vec<(RunId, NodeId)> = t
                .children_of(at)
                .iter()
                .filter(|c| is_trunk_node(c.down) && layout_of(c.run) == Some(ReturnLayout::Reverse))
                .map(|c| (c.run, c.down))
                .collect();
            match trunk.as_slice() {
                [] => break,
                [(r, c)] => {
                    chain.runs.push(*r);
                    at = *c;
                }
                _ => {
                    forked = true;
                    let label = d.node(at).map_or_else(|| at.to_string(), crate::project::Node::label);
                    findings.push(findings::reverse_return_fork(at, &label));
                    break;
                }
            }
        }
        if !forked {
            chains.push(chain);
        }
    }
    t.reverse_chains = chains;
    (t, findings)
}
