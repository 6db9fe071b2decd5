//! Selecting many nodes at once: a box dragged on empty canvas with the
//! select tool, and Shift+click to add or remove one node. The group is
//! transient canvas state ([`super::CanvasState::group`]); moving, deleting
//! and copying act on it (runs between two grouped nodes go along).

use std::collections::BTreeSet;

use egui::{Painter, Pos2, Rect, Stroke};
use flowrise_core::project::{Edit, LevelId, NodeId, Project};

use super::hit::Hit;
use super::view::View;
use crate::gui::intents::Selection;
use crate::gui::theme;

/// A box narrower than this is a click, not a box, screen points.
pub const MIN_BOX_PX: f32 = 4.0;

/// Nodes of `level` whose symbol centre lies inside the screen box `a`–`b`.
#[must_use]
pub fn nodes_in_box(project: &Project, level: LevelId, view: &View, a: Pos2, b: Pos2) -> Vec<NodeId> {
    let rect = Rect::from_two_pos(a, b);
    project.nodes().filter(|n| n.level == level && rect.contains(view.screen_from_plan(n.pos))).map(|n| n.id).collect()
}

/// The selection the inspector shows for a group: its node when it holds
/// one, else nothing (the inspector shows the settings).
#[must_use]
pub fn selection_of(group: &BTreeSet<NodeId>) -> Selection {
    match group.iter().next() {
        Some(&id) if group.len() == 1 => Selection::Node(id),
        _ => Selection::None,
    }
}

/// Shift+click: add the node under the pointer to the group or take it
/// out. A node selected on its own before joins the group first.
pub fn toggle(group: &mut BTreeSet<NodeId>, current: Selection, hit: Option<Hit>) {
    if let Selection::Node(id) = current
        && group.is_empty()
    {
        group.insert(id);
    }
    if let Some(Hit::Node(id)) = hit
        && !group.remove(&id)
    {
        group.insert(id);
    }
}

/// The one edit that removes the group's nodes (and their runs).
#[must_use]
pub fn delete_edit(project: &Project, group: &BTreeSet<NodeId>) -> Option<Edit> {
    let edits: Vec<Edit> =
        group.iter().filter(|&&id| project.node(id).is_some()).map(|&id| Edit::RemoveNode(id)).collect();
    (!edits.is_empty()).then_some(Edit::Batch(edits))
}

/// Draw the rubber band.
pub fn draw_box(painter: &Painter, a: Pos2, b: Pos2) {
    let rect = Rect::from_two_pos(a, b);
    painter.rect_filled(rect, 0, theme::SELECT.gamma_multiply(0.08));
    painter.rect_stroke(rect, 0, Stroke::new(1.0, theme::SELECT), egui::StrokeKind::Inside);
}

/// Ring the grouped nodes of the level shown.
pub fn draw_group(painter: &Painter, project: &Project, level: LevelId, view: &View, group: &BTreeSet<NodeId>) {
    for n in group.iter().filter_map(|&id| project.node(id)).filter(|n| n.level == level) {
        painter.circle_stroke(view.screen_from_plan(n.pos), 11.0, Stroke::new(2.0, theme::SELECT));
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn shift_click_adds_the_single_selection_first_and_toggles() {
        let mut g = BTreeSet::new();
        toggle(&mut g, Selection::Node(NodeId(1)), Some(Hit::Node(NodeId(2))));
        assert_eq!(g.iter().copied().collect::<Vec<_>>(), [NodeId(1), NodeId(2)]);
        toggle(&mut g, Selection::None, Some(Hit::Node(NodeId(1))));
        assert_eq!(g.iter().copied().collect::<Vec<_>>(), [NodeId(2)]);
        assert_eq!(selection_of(&g), Selection::Node(NodeId(2)));
    }
}
