//! Undo/redo: a bounded stack of project snapshots pushed between
//! interactions (one drag = one step), restored whole. Snapshots are
//! shared (`Arc`): pushing the current document costs nothing until it is
//! next edited, and a snapshot equal to the saved file is the same memory.

use std::sync::Arc;

use flowrise_core::project::Project;

/// Most undo steps kept.
pub const MAX_STEPS: usize = 200;

/// Undo and redo stacks of project snapshots.
#[derive(Debug, Default)]
pub struct History {
    undo: Vec<Arc<Project>>,
    redo: Vec<Arc<Project>>,
}

impl History {
    /// Remember `before` as the state to go back to; clears the redo stack.
    pub fn push(&mut self, before: Arc<Project>) {
        self.undo.push(before);
        if self.undo.len() > MAX_STEPS {
            self.undo.remove(0);
        }
        self.redo.clear();
    }

    /// Drop the last snapshot when it equals `current` (a drag that moved nothing).
    pub fn drop_if_unchanged(&mut self, current: &Project) {
        if self.undo.last().is_some_and(|p| **p == *current) {
            self.undo.pop();
        }
    }

    /// Go back one step: returns the project to restore.
    pub fn undo(&mut self, current: &Arc<Project>) -> Option<Arc<Project>> {
        let p = self.undo.pop()?;
        self.redo.push(Arc::clone(current));
        Some(p)
    }

    /// Go forward one step.
    pub fn redo(&mut self, current: &Arc<Project>) -> Option<Arc<Project>> {
        let p = self.redo.pop()?;
        self.undo.push(Arc::clone(current));
        Some(p)
    }

    /// Something to undo.
    #[must_use]
    pub fn can_undo(&self) -> bool {
        !self.undo.is_empty()
    }

    /// Something to redo.
    #[must_use]
    pub fn can_redo(&self) -> bool {
        !self.redo.is_empty()
    }

    /// Forget everything (new or opened project).
    pub fn clear(&mut self) {
        self.undo.clear();
        self.redo.clear();
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn undo_then_redo_round_trips() {
        let a = Arc::new(Project::new("a"));
        let b = Arc::new(Project::new("b"));
        let mut h = History::default();
        h.push(Arc::clone(&a));
        let back = h.undo(&b).unwrap();
        assert_eq!(back, a);
        assert!(Arc::ptr_eq(&back, &a), "the snapshot itself, not a copy");
        assert_eq!(h.redo(&back).unwrap(), b);
        assert!(h.can_undo() && !h.can_redo());
    }
}
