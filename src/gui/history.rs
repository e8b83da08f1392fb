//! Undo and redo by whole-design snapshots.
//!
//! The window commits a snapshot at the end of each finished gesture (no drag in progress, no
//! text field being edited), so a drag of a thickness is one undo step, not hundreds.

use std::collections::VecDeque;

use crate::design::Design;

/// Most undo steps kept; the oldest are forgotten first.
pub const MAX_UNDO: usize = 100;

/// Snapshots of the design before and after each committed step.
#[derive(Clone, Debug)]
pub struct History {
    undo: VecDeque<Design>,
    redo: Vec<Design>,
    last: Design,
}

impl History {
    /// A history whose current state is `design`, with nothing to undo.
    #[must_use]
    pub fn new(design: &Design) -> Self {
        Self {
            undo: VecDeque::new(),
            redo: Vec::new(),
            last: design.clone(),
        }
    }

    /// Records `current` as a step if it differs from the last committed state; clears redo.
    /// Returns whether a step was recorded.
    pub fn commit(&mut self, current: &Design) -> bool {
        if *current == self.last {
            return false;
        }
        let before = std::mem::replace(&mut self.last, current.clone());
        self.undo.push_back(before);
        while self.undo.len() > MAX_UNDO {
            self.undo.pop_front();
        }
        self.redo.clear();
        true
    }

    /// The design before the last step (committing `current` first if it has unrecorded
    /// changes), or `None` when there is nothing to undo.
    pub fn undo(&mut self, current: &Design) -> Option<Design> {
        self.commit(current);
        let previous = self.undo.pop_back()?;
        let now = std::mem::replace(&mut self.last, previous.clone());
        self.redo.push(now);
        Some(previous)
    }

    /// The design after the last undone step, or `None` when there is nothing to redo.
    /// Unrecorded changes in `current` are committed first, which clears the redo list.
    pub fn redo(&mut self, current: &Design) -> Option<Design> {
        self.commit(current);
        let next = self.redo.pop()?;
        let now = std::mem::replace(&mut self.last, next.clone());
        self.undo.push_back(now);
        Some(next)
    }

    /// Whether [`History::undo`] would change anything for `current`.
    #[must_use]
    pub fn can_undo(&self, current: &Design) -> bool {
        !self.undo.is_empty() || *current != self.last
    }

    /// Whether [`History::redo`] would change anything for `current`.
    #[must_use]
    pub fn can_redo(&self, current: &Design) -> bool {
        !self.redo.is_empty() && *current == self.last
    }

    /// Number of steps that can be undone (not counting uncommitted changes).
    #[must_use]
    pub fn undo_len(&self) -> usize {
        self.undo.len()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn named(name: &str) -> Design {
        Design::new_empty(name)
    }

    #[test]
    fn undo_and_redo_walk_the_snapshots() {
        let mut h = History::new(&named("a"));
        assert!(h.commit(&named("b")), "a change is a step");
        assert!(!h.commit(&named("b")), "no change, no step");
        h.commit(&named("c"));
        assert_eq!(h.undo(&named("c")).map(|d| d.name), Some("b".into()));
        assert_eq!(h.undo(&named("b")).map(|d| d.name), Some("a".into()));
        assert!(h.undo(&named("a")).is_none(), "nothing left to undo");
        assert_eq!(h.redo(&named("a")).map(|d| d.name), Some("b".into()));
        assert_eq!(h.redo(&named("b")).map(|d| d.name), Some("c".into()));
        assert!(h.redo(&named("c")).is_none(), "nothing left to redo");
    }

    #[test]
    fn uncommitted_changes_are_kept_as_a_step_and_clear_redo() {
        let mut h = History::new(&named("a"));
        h.commit(&named("b"));
        assert_eq!(h.undo(&named("b")).map(|d| d.name), Some("a".into()));
        // An edit after an undo, not yet committed: undo returns to "a", redo is gone.
        assert_eq!(h.undo(&named("x")).map(|d| d.name), Some("a".into()));
        assert_eq!(h.redo(&named("a")).map(|d| d.name), Some("x".into()));
        assert!(h.redo(&named("x")).is_none(), "the old redo was cleared");
    }

    #[test]
    fn history_is_capped() {
        let mut h = History::new(&named("0"));
        for i in 1..=MAX_UNDO + 20 {
            h.commit(&named(&i.to_string()));
        }
        assert_eq!(h.undo_len(), MAX_UNDO, "cap");
        let mut current = named(&(MAX_UNDO + 20).to_string());
        while let Some(d) = h.undo(&current) {
            current = d;
        }
        assert_eq!(current.name, "20", "the oldest 20 steps were dropped");
    }
}
