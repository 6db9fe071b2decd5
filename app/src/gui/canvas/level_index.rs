//! What the plan of the shown level draws and hit-tests, found once per
//! project revision and level instead of every frame: the level's nodes
//! and runs (a scan of the whole building otherwise — 600,000 nodes and
//! 400,000 runs at 200,000 emitters, for the 3 % of them on one level), the
//! nodes a riser ends at, and from the results the node each balancing
//! device's branch starts at.

use std::collections::{BTreeSet, HashMap};

use flowrise_core::design::Solution;
use flowrise_core::project::{LevelId, Node, NodeId, Project, Run, RunId};

/// The shown level's items (see the module docs).
#[derive(Debug, Clone, Default)]
pub struct LevelIndex {
    /// (project revision, level) the lists below belong to.
    key: Option<(u64, LevelId)>,
    /// (solution revision, preview, device count) of `device_branch`.
    sol_key: Option<(u64, bool, usize)>,
    /// Nodes on the level, in id order.
    nodes: Vec<NodeId>,
    /// Runs with both ends on the level, in id order.
    runs: Vec<RunId>,
    /// Nodes on the level where a run to another level ends.
    risers: BTreeSet<NodeId>,
    /// Per run with a balancing device: the first node of its branch.
    device_branch: HashMap<RunId, NodeId>,
    /// Project revision of `counts` and `vertical`.
    counts_revision: Option<u64>,
    /// Nodes per level (the level tabs).
    counts: HashMap<LevelId, usize>,
    /// Runs between levels, in id order (the riser view).
    vertical: Vec<RunId>,
}

impl LevelIndex {
    /// Bring the lists up to `project`'s revision and `level`, and the
    /// device branches up to `sol`.
    pub fn update(&mut self, project: &Project, sol: &Solution, level: LevelId) {
        if self.counts_revision != Some(project.revision) {
            self.counts.clear();
            for n in project.nodes() {
                *self.counts.entry(n.level).or_insert(0) += 1;
            }
            self.vertical = project.vertical_runs().map(|(r, _, _)| r.id).collect();
            self.counts_revision = Some(project.revision);
        }
        let key = (project.revision, level);
        if self.key != Some(key) {
            self.nodes = project.nodes().filter(|n| n.level == level).map(|n| n.id).collect();
            self.runs = project
                .runs_with_ends()
                .filter(|(_, a, b)| a.level == level && b.level == level)
                .map(|(r, _, _)| r.id)
                .collect();
            self.risers = self
                .vertical_runs(project)
                .flat_map(|(_, a, b)| [a, b])
                .filter(|n| n.level == level)
                .map(|n| n.id)
                .collect();
            self.key = Some(key);
        }
        let sol_key = (sol.revision, sol.preview, sol.devices.len());
        if self.sol_key != Some(sol_key) {
            self.device_branch = sol.devices.iter().map(|d| (d.run, d.branch)).collect();
            self.sol_key = Some(sol_key);
        }
    }

    /// The project went from revision `from` to `to` by moving nodes in
    /// plan (no node or run changed level, none came or went): the lists
    /// of `from` are those of `to` (the device branches follow the results
    /// by their own key).
    pub fn carry_over(&mut self, from: u64, to: u64) {
        if let Some((r, level)) = self.key
            && r == from
        {
            self.key = Some((to, level));
        }
        if self.counts_revision == Some(from) {
            self.counts_revision = Some(to);
        }
    }

    /// The level's nodes.
    pub fn nodes<'a>(&'a self, project: &'a Project) -> impl Iterator<Item = &'a Node> + 'a {
        self.nodes.iter().filter_map(move |&id| project.node(id))
    }

    /// The level's runs with their end nodes.
    pub fn runs<'a>(&'a self, project: &'a Project) -> impl Iterator<Item = (&'a Run, &'a Node, &'a Node)> + 'a {
        self.runs.iter().filter_map(move |&id| {
            let r = project.run(id)?;
            Some((r, project.node(r.a)?, project.node(r.b)?))
        })
    }

    /// The runs between levels with their end nodes (all levels).
    pub fn vertical_runs<'a>(
        &'a self,
        project: &'a Project,
    ) -> impl Iterator<Item = (&'a Run, &'a Node, &'a Node)> + 'a {
        self.vertical.iter().filter_map(move |&id| {
            let r = project.run(id)?;
            Some((r, project.node(r.a)?, project.node(r.b)?))
        })
    }

    /// True when a riser (a run to another level) ends at `node`.
    #[must_use]
    pub fn is_riser_end(&self, node: NodeId) -> bool {
        self.risers.contains(&node)
    }

    /// The first node of the branch the device on `run` feeds.
    #[must_use]
    pub fn device_branch(&self, run: RunId) -> Option<NodeId> {
        self.device_branch.get(&run).copied()
    }

    /// Number of nodes on `level`.
    #[must_use]
    pub fn nodes_on(&self, level: LevelId) -> usize {
        self.counts.get(&level).copied().unwrap_or(0)
    }

    /// The level the lists are for (None before the first update).
    #[must_use]
    pub fn level(&self) -> Option<LevelId> {
        self.key.map(|k| k.1)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use flowrise_core::design::{SolveOptions, Workspace, solve_project};
    use flowrise_core::generate::{BuildingSpec, generate_building};
    use flowrise_core::project::{Edit, NodeKind, PlanPoint};

    /// The index holds what a scan of the whole project finds, and follows
    /// an edit (a new revision) and a change of level.
    #[test]
    fn the_index_matches_a_full_scan_and_follows_edits_and_levels() {
        let mut p = generate_building(&BuildingSpec::new(3, 12)).unwrap();
        let sol = solve_project(&p, &SolveOptions::default(), &mut Workspace::default());
        let check = |ix: &LevelIndex, p: &Project, level: LevelId| {
            let nodes: Vec<NodeId> = p.nodes().filter(|n| n.level == level).map(|n| n.id).collect();
            assert_eq!(ix.nodes(p).map(|n| n.id).collect::<Vec<_>>(), nodes);
            assert_eq!(ix.nodes_on(level), nodes.len());
            let runs: Vec<RunId> = p
                .runs_with_ends()
                .filter(|(_, a, b)| a.level == level && b.level == level)
                .map(|(r, _, _)| r.id)
                .collect();
            assert_eq!(ix.runs(p).map(|(r, _, _)| r.id).collect::<Vec<_>>(), runs);
            let vertical: Vec<RunId> = p.vertical_runs().map(|(r, _, _)| r.id).collect();
            assert_eq!(ix.vertical_runs(p).map(|(r, _, _)| r.id).collect::<Vec<_>>(), vertical);
            for &n in &nodes {
                let riser = p.runs_at(n).iter().any(|&r| p.run(r).is_some_and(|r| p.is_vertical(r)));
                assert_eq!(ix.is_riser_end(n), riser, "{n}");
            }
        };
        let mut ix = LevelIndex::default();
        for l in [LevelId(0), LevelId(1), LevelId(2)] {
            ix.update(&p, &sol, l);
            assert_eq!(ix.level(), Some(l));
            check(&ix, &p, l);
        }
        // The middle level has the riser's junction: a riser end.
        ix.update(&p, &sol, LevelId(1));
        assert!(p.nodes().any(|n| n.level == LevelId(1) && ix.is_riser_end(n.id)));
        for d in &sol.devices {
            assert_eq!(ix.device_branch(d.run), Some(d.branch));
        }
        p.apply(Edit::AddNode { level: LevelId(2), pos: PlanPoint::new(-50.0, -50.0), kind: NodeKind::Junction })
            .unwrap();
        ix.update(&p, &sol, LevelId(2));
        check(&ix, &p, LevelId(2));
        // A move keeps the lists: carried over, they still match a scan.
        let from = p.revision;
        let ids: Vec<NodeId> = p.nodes().filter(|n| n.level == LevelId(2)).map(|n| n.id).take(3).collect();
        p.apply(Edit::MoveNodes { ids, dx_m: 1.5, dy_m: -2.0 }).unwrap();
        ix.carry_over(from, p.revision);
        assert_eq!(ix.key, Some((p.revision, LevelId(2))));
        check(&ix, &p, LevelId(2));
    }
}
