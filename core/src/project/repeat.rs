//! Editing many items at once: copy a set of nodes with the runs between
//! them, paste the copy (on the same level or another one), and repeat a
//! whole level's network on other levels.
//!
//! Each operation builds one [`Edit::Batch`], which [`Project::apply`] tries
//! on a copy and applies all or nothing, so it is one undo step. New nodes
//! get new ids: a batch's `AddNode`s take the ids from
//! [`Project::peek_node_id`] upwards in order, which is how the runs of the
//! batch name them (the same rule the canvas tools use).
//!
//! **Repeat floor** ([`repeat_level`]): the source level's nodes and its
//! runs (both ends on it) are copied onto each target level at the same
//! plan positions. Where the floors line up — a node of the source level
//! that rises (has a vertical run) or is the heat source, and a junction,
//! header or source at the same plan position (within
//! [`JOIN_TOLERANCE_M`]) on the target level — the copy is joined to that
//! target node instead of getting a node of its own, so the target's riser
//! feeds the copied branch. A rising node with no partner is copied as a
//! junction and reported: its riser needs drawing.

use std::collections::{BTreeMap, BTreeSet};

use super::edit::EditError;
use super::{Edit, LevelId, Node, NodeId, NodeKind, PlanPoint, Project, Run, RunId, RunProps};

/// How close two plan positions on different levels must be to count as
/// the same riser, m (10 mm: closer than anyone draws two separate risers,
/// far coarser than the rounding of a typed or snapped position).
pub const JOIN_TOLERANCE_M: f64 = 0.01;

/// A copied piece of a drawing: nodes and the runs between them.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Fragment {
    /// The nodes as copied (their ids are the originals').
    pub nodes: Vec<Node>,
    /// Runs with both ends among [`Self::nodes`].
    pub runs: Vec<Run>,
}

impl Fragment {
    /// Copy `ids` (unknown ids are skipped) and the runs joining two of them.
    #[must_use]
    pub fn copy(project: &Project, ids: &[NodeId]) -> Self {
        let set: BTreeSet<NodeId> = ids.iter().copied().filter(|&id| project.node(id).is_some()).collect();
        let nodes = set.iter().filter_map(|&id| project.node(id).cloned()).collect();
        let runs = project.runs().filter(|r| set.contains(&r.a) && set.contains(&r.b)).cloned().collect();
        Self { nodes, runs }
    }

    /// True when nothing was copied.
    #[must_use]
    pub fn is_empty(&self) -> bool {
        self.nodes.is_empty()
    }

    /// Lower-left corner of the copied nodes and run bends, m.
    #[must_use]
    pub fn min_corner(&self) -> PlanPoint {
        let pts = self.nodes.iter().map(|n| n.pos).chain(self.runs.iter().flat_map(|r| r.vertices.iter().copied()));
        pts.fold(PlanPoint::new(f64::INFINITY, f64::INFINITY), |m, p| {
            PlanPoint::new(m.x_m.min(p.x_m), m.y_m.min(p.y_m))
        })
    }
}

/// What a paste will do, besides its edit.
#[derive(Debug, Clone, PartialEq)]
pub struct Paste {
    /// The edit (one undo step).
    pub edit: Edit,
    /// Ids the new nodes will have, in the fragment's node order (skipped
    /// nodes left out).
    pub new_nodes: Vec<NodeId>,
    /// Heat sources left out (one per network).
    pub skipped_sources: usize,
}

/// Paste `frag` onto `level`, moved by (`dx_m`, `dy_m`): new nodes, new
/// runs between them (vertical runs of the copy become runs on the level).
/// A heat source is not pasted (a network has one) and is reported.
///
/// # Errors
/// [`EditError`] when the level does not exist or nothing can be pasted.
pub fn paste(project: &Project, frag: &Fragment, level: LevelId, dx_m: f64, dy_m: f64) -> Result<Paste, EditError> {
    if project.level(level).is_none() {
        return Err(EditError::Missing(format!("level {level}")));
    }
    let shift = |p: PlanPoint| PlanPoint::new(p.x_m + dx_m, p.y_m + dy_m);
    let mut edits = Vec::new();
    let mut ids = BTreeMap::new();
    let mut next = project.peek_node_id().0;
    let mut skipped_sources = 0;
    for n in &frag.nodes {
        if matches!(n.kind, NodeKind::Source(_)) {
            skipped_sources += 1;
            continue;
        }
        edits.push(Edit::AddNode { level, pos: shift(n.pos), kind: n.kind.clone() });
        ids.insert(n.id, NodeId(next));
        next = next.saturating_add(1);
    }
    if edits.is_empty() {
        return Err(EditError::Invalid {
            item: "paste".to_owned(),
            message: "nothing to paste: the copy holds only the heat source, and a network has one".to_owned(),
        });
    }
    let mut k = 0;
    for r in &frag.runs {
        if let (Some(&a), Some(&b)) = (ids.get(&r.a), ids.get(&r.b)) {
            edits.push(Edit::AddRun { a, b, vertices: r.vertices.iter().map(|&v| shift(v)).collect() });
            edits.extend(props_edit(project, k, &r.props));
            k += 1;
        }
    }
    let new_nodes = frag.nodes.iter().filter_map(|n| ids.get(&n.id).copied()).collect();
    Ok(Paste { edit: Edit::Batch(edits), new_nodes, skipped_sources })
}

/// Keep a copied run's properties: a `SetRunProps` for the `k`-th run the
/// batch makes (0-based; run ids are taken like node ids, from
/// [`Project::peek_run_id`] in order).
fn props_edit(project: &Project, k: usize, props: &RunProps) -> Option<Edit> {
    if *props == RunProps::default() {
        return None;
    }
    let id = RunId(project.peek_run_id().0.saturating_add(u32::try_from(k).ok()?));
    Some(Edit::SetRunProps { id, props: props.clone() })
}

/// What a repeat of a level did, for the status line.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct RepeatReport {
    /// Nodes created over all target levels.
    pub nodes: usize,
    /// Runs created.
    pub runs: usize,
    /// Copies joined to a riser node of a target level: (level, that node).
    pub joined: Vec<(LevelId, NodeId)>,
    /// Rising nodes with no partner on a target level: (level, position).
    pub unjoined: Vec<(LevelId, PlanPoint)>,
    /// Nodes removed from the target levels first (`replace`).
    pub removed: usize,
}

/// Copy level `from`'s network onto each level of `to` (see the module
/// docs). A target level that holds anything besides nodes that rise is
/// refused unless `replace`, which removes those first (its rising nodes
/// stay, so the risers through it are kept).
///
/// # Errors
/// [`EditError`] naming the level and the fix: an unknown level, the
/// source among the targets, an empty source, a target in use.
pub fn repeat_level(
    project: &Project,
    from: LevelId,
    to: &[LevelId],
    replace: bool,
) -> Result<(Edit, RepeatReport), EditError> {
    let level_name = |id: LevelId| project.level(id).map(|l| l.name.clone());
    let from_name = level_name(from).ok_or_else(|| EditError::Missing(format!("level {from}")))?;
    let rises =
        |n: &Node| project.runs_at(n.id).iter().any(|&r| project.run(r).is_some_and(|r| project.is_vertical(r)));
    let source_nodes: Vec<&Node> = project.nodes().filter(|n| n.level == from).collect();
    if source_nodes.is_empty() {
        return Err(EditError::Invalid {
            item: format!("level {from_name}"),
            message: "has nothing drawn on it — pick the level whose network you want to repeat".to_owned(),
        });
    }
    let source_runs: Vec<&Run> = project
        .runs()
        .filter(|r| [r.a, r.b].iter().all(|&n| project.node(n).is_some_and(|n| n.level == from)))
        .collect();
    let mut report = RepeatReport::default();
    let mut removals = Vec::new();
    let mut additions = Vec::new();
    let mut next = project.peek_node_id().0;
    let mut targets: Vec<LevelId> = to.to_vec();
    targets.sort_unstable();
    targets.dedup();
    for &t in &targets {
        let t_name = level_name(t).ok_or_else(|| EditError::Missing(format!("level {t}")))?;
        if t == from {
            return Err(EditError::Invalid {
                item: format!("level {t_name}"),
                message: "is the level being repeated — pick other levels as targets".to_owned(),
            });
        }
        let on_target: Vec<&Node> = project.nodes().filter(|n| n.level == t).collect();
        let in_the_way: Vec<&&Node> = on_target.iter().filter(|n| !rises(n)).collect();
        if !in_the_way.is_empty() {
            if !replace {
                return Err(EditError::Invalid {
                    item: format!("level {t_name}"),
                    message: format!(
                        "holds {} items besides its risers — choose “replace what is there”, or pick an empty level",
                        in_the_way.len()
                    ),
                });
            }
            report.removed += in_the_way.len();
            removals.extend(in_the_way.iter().map(|n| Edit::RemoveNode(n.id)));
        }
        let partners: Vec<&&Node> =
            on_target.iter().filter(|n| rises(n) && !matches!(n.kind, NodeKind::Emitter(_))).collect();
        let mut ids: BTreeMap<NodeId, NodeId> = BTreeMap::new();
        let mut joined_here: BTreeSet<NodeId> = BTreeSet::new();
        for n in &source_nodes {
            let is_source = matches!(n.kind, NodeKind::Source(_));
            if is_source || rises(n) {
                let partner = partners
                    .iter()
                    .filter(|m| m.pos.distance_m(n.pos) <= JOIN_TOLERANCE_M && !joined_here.contains(&m.id))
                    .min_by(|a, b| a.pos.distance_m(n.pos).total_cmp(&b.pos.distance_m(n.pos)));
                if let Some(m) = partner {
                    ids.insert(n.id, m.id);
                    joined_here.insert(m.id);
                    report.joined.push((t, m.id));
                    continue;
                }
                report.unjoined.push((t, n.pos));
            }
            let kind = if is_source { NodeKind::Junction } else { n.kind.clone() };
            additions.push(Edit::AddNode { level: t, pos: n.pos, kind });
            ids.insert(n.id, NodeId(next));
            next = next.saturating_add(1);
            report.nodes += 1;
        }
        for r in &source_runs {
            let (Some(&a), Some(&b)) = (ids.get(&r.a), ids.get(&r.b)) else { continue };
            if joined_here.contains(&a)
                && joined_here.contains(&b)
                && project.runs_at(a).iter().any(|&x| project.other_end(x, a) == Some(b))
            {
                continue; // the target has this run already
            }
            additions.push(Edit::AddRun { a, b, vertices: r.vertices.clone() });
            additions.extend(props_edit(project, report.runs, &r.props));
            report.runs += 1;
        }
    }
    removals.extend(additions);
    Ok((Edit::Batch(removals), report))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::project::{Header, LevelId};

    /// Two levels: a header on level 0 with a riser junction at (0, 0)
    /// rising to a junction on level 1.
    fn riser_project() -> Project {
        let mut p = Project::new("t");
        p.apply(Edit::AddLevel { name: "Up".to_owned(), elevation_m: 3.0 }).unwrap();
        let j0 = p
            .apply(Edit::AddNode { level: LevelId(0), pos: PlanPoint::new(0.0, 0.0), kind: NodeKind::Junction })
            .unwrap()
            .nodes[0];
        let h = NodeKind::Header(Header { name: "H".to_owned(), outlets: 4 });
        let h0 = p.apply(Edit::AddNode { level: LevelId(0), pos: PlanPoint::new(3.0, 0.0), kind: h }).unwrap().nodes[0];
        let j1 = p
            .apply(Edit::AddNode { level: LevelId(1), pos: PlanPoint::new(0.0, 0.0), kind: NodeKind::Junction })
            .unwrap()
            .nodes[0];
        p.apply(Edit::AddRun { a: j0, b: h0, vertices: vec![PlanPoint::new(1.0, 1.0)] }).unwrap();
        p.apply(Edit::AddRun { a: j0, b: j1, vertices: Vec::new() }).unwrap();
        p
    }

    #[test]
    fn paste_makes_new_ids_and_the_runs_between_the_copied_nodes() {
        let mut p = riser_project();
        let ids: Vec<NodeId> = p.nodes().filter(|n| n.level == LevelId(0)).map(|n| n.id).collect();
        let frag = Fragment::copy(&p, &ids);
        assert_eq!((frag.nodes.len(), frag.runs.len()), (2, 1), "the riser run leaves the selection: not copied");
        let paste = paste(&p, &frag, LevelId(0), 0.0, -5.0).unwrap();
        let out = p.apply(paste.edit).unwrap();
        assert_eq!(out.nodes, paste.new_nodes, "the predicted ids are the ones made");
        assert_eq!(out.runs.len(), 1);
        let r = p.run(out.runs[0]).unwrap();
        assert_eq!((r.a, r.b), (out.nodes[0], out.nodes[1]));
        assert_eq!(r.vertices, [PlanPoint::new(1.0, -4.0)]);
    }

    #[test]
    fn repeat_joins_the_riser_and_refuses_a_used_level_unless_replacing() {
        let mut p = riser_project();
        let riser_top = p.nodes().find(|n| n.level == LevelId(1)).unwrap().id;
        let (edit, rep) = repeat_level(&p, LevelId(0), &[LevelId(1)], false).unwrap();
        assert_eq!(rep.joined, [(LevelId(1), riser_top)]);
        assert!(rep.unjoined.is_empty());
        p.apply(edit).unwrap();
        let up: Vec<_> = p.nodes().filter(|n| n.level == LevelId(1)).collect();
        assert_eq!(up.len(), 2, "the riser junction and the copied header");
        let header = up.iter().find(|n| matches!(n.kind, NodeKind::Header(_))).unwrap();
        assert_eq!(p.runs_at(header.id).len(), 1);
        let r = p.run(p.runs_at(header.id)[0]).unwrap();
        assert_eq!(p.other_end(r.id, header.id), Some(riser_top), "the copy hangs on the riser");
        let err = repeat_level(&p, LevelId(0), &[LevelId(1)], false).unwrap_err().to_string();
        assert!(err.contains("Up") && err.contains("replace"), "{err}");
        let before = p.node_count();
        let (edit, rep) = repeat_level(&p, LevelId(0), &[LevelId(1)], true).unwrap();
        assert_eq!(rep.removed, 1);
        p.apply(edit).unwrap();
        assert_eq!(p.node_count(), before, "the old copy replaced, not doubled");
        assert!(repeat_level(&p, LevelId(0), &[LevelId(0)], true).is_err());
    }
}
