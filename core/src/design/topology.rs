//! Topology of the drawn layout: the supply tree from the heat source, pipe
//! classes, reverse-return chains and the findings about connectivity.

use std::collections::{BTreeMap, BTreeSet, VecDeque};

use super::findings::{Finding, ItemRef};
use crate::project::{NodeId, NodeKind, PipeClass, Project, ReturnLayout, RunId};

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
    /// The run feeding each reachable node (not the source).
    pub parent_run: BTreeMap<NodeId, RunId>,
    /// Children of each node: (run, child node), sorted by run id.
    pub children: BTreeMap<NodeId, Vec<(RunId, NodeId)>>,
    /// Reachable emitters, in depth-first supply order.
    pub emitters: Vec<NodeId>,
    /// Pipe class of each tree run.
    pub class: BTreeMap<RunId, PipeClass>,
    /// Reverse-return chains.
    pub reverse_chains: Vec<ReverseChain>,
    /// Runs left out because they close a loop.
    pub loop_runs: Vec<RunId>,
    /// Index into `runs` of each tree run.
    run_index: BTreeMap<RunId, usize>,
}

impl Topology {
    /// The oriented tree run of `run`, if it is in the tree.
    #[must_use]
    pub fn tree_run(&self, run: RunId) -> Option<TreeRun> {
        self.run_index.get(&run).and_then(|&i| self.runs.get(i)).copied()
    }
}

/// Analyse the layout: orient runs away from the source, classify them, find
/// reverse-return chains; every problem becomes a finding naming the items.
#[must_use]
#[allow(clippy::too_many_lines)] // reason: one pass with its findings reads best together
pub fn analyse(p: &Project) -> (Topology, Vec<Finding>) {
    let mut t = Topology::default();
    let mut findings = Vec::new();
    let sources = p.sources();
    let Some(&source) = sources.first() else {
        findings.push(Finding::error(
            ItemRef::Project,
            "the project has no heat source — place one with the Source tool and draw a run from it",
        ));
        return (t, findings);
    };
    t.source = Some(source);
    if p.runs_at(source).is_empty() {
        findings.push(Finding::error(
            ItemRef::Node(source),
            "the heat source has no run — draw a run from it to a junction, header or emitter",
        ));
    }

    // Breadth-first from the source; a run that reaches a node already seen
    // closes a loop.
    let mut seen: BTreeSet<NodeId> = BTreeSet::new();
    let mut used_runs: BTreeSet<RunId> = BTreeSet::new();
    let mut queue = VecDeque::from([source]);
    seen.insert(source);
    while let Some(n) = queue.pop_front() {
        t.order.push(n);
        let is_emitter = matches!(p.node(n).map(|x| &x.kind), Some(NodeKind::Emitter(_)));
        for run in p.runs_at(n) {
            if used_runs.contains(&run) {
                continue;
            }
            used_runs.insert(run);
            let Some(other) = p.other_end(run, n) else { continue };
            if seen.contains(&other) {
                t.loop_runs.push(run);
                continue;
            }
            if is_emitter && n != source {
                // An emitter is a leaf: its one run is its parent run. (Edits
                // and loading refuse a second run, so this is defensive.)
                continue;
            }
            seen.insert(other);
            t.parent_run.insert(other, run);
            t.children.entry(n).or_default().push((run, other));
            t.run_index.insert(run, t.runs.len());
            t.runs.push(TreeRun { run, up: n, down: other });
            queue.push_back(other);
        }
    }
    for list in t.children.values_mut() {
        list.sort_unstable();
    }
    if !t.loop_runs.is_empty() {
        t.loop_runs.sort_unstable();
        let names: Vec<String> = t.loop_runs.iter().map(ToString::to_string).collect();
        for &r in &t.loop_runs {
            findings.push(Finding::error(
                ItemRef::Run(r),
                format!(
                    "run {r} closes a loop in the drawn network (loop-closing runs: {}) — a two-pipe layout is \
                     drawn as a tree from the source; delete the run or one of the loop's runs. Emitters in \
                     series on one pipe (a one-pipe loop) are outside flowrise's scope",
                    names.join(", ")
                ),
            ));
        }
    }

    // Unreachable items.
    for n in p.nodes() {
        if seen.contains(&n.id) {
            continue;
        }
        match &n.kind {
            NodeKind::Emitter(_) => findings.push(Finding::error(
                ItemRef::Node(n.id),
                format!(
                    "{} is not connected to the heat source — draw a run from it to a junction or header of the network",
                    n.label()
                ),
            )),
            _ => findings.push(Finding::warning(
                ItemRef::Node(n.id),
                format!("{} is not connected to the heat source — connect it or delete it", n.label()),
            )),
        }
    }
    for r in p.runs() {
        if !used_runs.contains(&r.id) {
            findings.push(Finding::warning(
                ItemRef::Run(r.id),
                format!("run {} is not connected to the heat source — connect it or delete it", r.id),
            ));
        }
    }

    // Depth-first order of emitters (supply order along each branch).
    let mut stack = vec![source];
    while let Some(n) = stack.pop() {
        if matches!(p.node(n).map(|x| &x.kind), Some(NodeKind::Emitter(_))) {
            t.emitters.push(n);
        }
        if let Some(ch) = t.children.get(&n) {
            for &(_, c) in ch.iter().rev() {
                stack.push(c);
            }
        }
    }

    // Dead ends: a junction or header with nothing downstream.
    for &n in &t.order {
        let Some(node) = p.node(n) else { continue };
        if matches!(node.kind, NodeKind::Junction | NodeKind::Header(_)) && !t.children.contains_key(&n) {
            findings.push(Finding::warning(
                ItemRef::Node(n),
                format!("{} is a dead end: no emitter downstream, so it carries no flow", node.label()),
            ));
        }
        if let NodeKind::Header(h) = &node.kind {
            let outlets = t.children.get(&n).map_or(0, Vec::len);
            if outlets > h.outlets as usize {
                findings.push(Finding::warning(
                    ItemRef::Node(n),
                    format!(
                        "{} has {outlets} outlet runs but {} outlets — raise its outlet count",
                        node.label(),
                        h.outlets
                    ),
                ));
            }
        }
    }

    // Pipe classes: connection if it ends at an emitter; main if vertical,
    // from the source, or feeding a vertical run further down; else branch.
    let mut feeds_vertical: BTreeMap<NodeId, bool> = BTreeMap::new();
    for tr in t.runs.iter().rev() {
        let below = feeds_vertical.get(&tr.down).copied().unwrap_or(false);
        let vertical = p.run(tr.run).is_some_and(|r| p.is_vertical(r));
        let v = below || vertical;
        let e = feeds_vertical.entry(tr.up).or_insert(false);
        *e = *e || v;
    }
    for tr in &t.runs {
        let Some(run) = p.run(tr.run) else { continue };
        let auto = if matches!(p.node(tr.down).map(|x| &x.kind), Some(NodeKind::Emitter(_))) {
            PipeClass::Connection
        } else if p.is_vertical(run) || tr.up == source || feeds_vertical.get(&tr.down).copied().unwrap_or(false) {
            PipeClass::Main
        } else {
            PipeClass::Branch
        };
        t.class.insert(tr.run, run.props.class.unwrap_or(auto));
    }

    // Effective return layout per run (inherited down the tree) and the
    // reverse-return chains.
    let mut layout: BTreeMap<RunId, ReturnLayout> = BTreeMap::new();
    for tr in &t.runs {
        let inherited =
            t.parent_run.get(&tr.up).and_then(|pr| layout.get(pr).copied()).unwrap_or(p.settings.return_layout);
        let own = p.run(tr.run).and_then(|r| r.props.return_layout).unwrap_or(inherited);
        layout.insert(tr.run, own);
    }
    let is_trunk_node =
        |n: NodeId| matches!(p.node(n).map(|x| &x.kind), Some(NodeKind::Junction | NodeKind::Header(_)));
    for tr in &t.runs {
        if layout.get(&tr.run) != Some(&ReturnLayout::Reverse) || !is_trunk_node(tr.down) {
            continue;
        }
        // A chain starts where the upstream run is not reverse (or at the source).
        let upstream_reverse = t.parent_run.get(&tr.up).is_some_and(|pr| {
            layout.get(pr) == Some(&ReturnLayout::Reverse) && t.tree_run(*pr).is_some_and(|ptr| is_trunk_node(ptr.down))
        });
        if upstream_reverse {
            continue;
        }
        let mut chain = ReverseChain { start: tr.up, runs: vec![tr.run] };
        let mut at = tr.down;
        let mut forked = false;
        loop {
            let trunk: Vec<(RunId, NodeId)> = t
                .children
                .get(&at)
                .map(|ch| {
                    ch.iter()
                        .copied()
                        .filter(|&(r, c)| is_trunk_node(c) && layout.get(&r) == Some(&ReturnLayout::Reverse))
                        .collect()
                })
                .unwrap_or_default();
            match trunk.as_slice() {
                [] => break,
                [(r, c)] => {
                    chain.runs.push(*r);
                    at = *c;
                }
                _ => {
                    forked = true;
                    findings.push(Finding::warning(
                        ItemRef::Node(at),
                        format!(
                            "reverse return needs one trunk, but the branch forks at {} — this branch is derived \
                             as direct return; give the forks their own reverse-return start or use direct return",
                            p.node(at).map_or_else(|| at.to_string(), crate::project::Node::label)
                        ),
                    ));
                    break;
                }
            }
        }
        if !forked {
            t.reverse_chains.push(chain);
        }
    }
    (t, findings)
}
