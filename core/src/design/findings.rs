//! Findings: errors, warnings and notes, each tied to the item it concerns.

use std::fmt;
use std::sync::Arc;

use serde::Serialize;

use crate::project::{NodeId, RunId};

/// How serious a finding is.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Severity {
    /// The design is incomplete or wrong until this is fixed.
    Error,
    /// The design works but something needs attention.
    Warning,
    /// Information.
    Note,
}

/// The item a finding concerns.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum ItemRef {
    /// The project as a whole.
    Project,
    /// The design settings.
    Settings,
    /// A node (source, junction, header, emitter).
    Node(NodeId),
    /// A run.
    Run(RunId),
}

impl fmt::Display for ItemRef {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::Project => write!(f, "project"),
            Self::Settings => write!(f, "settings"),
            Self::Node(n) => write!(f, "{n}"),
            Self::Run(r) => write!(f, "{r}"),
        }
    }
}

impl Serialize for ItemRef {
    fn serialize<S: serde::Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        s.collect_str(self)
    }
}

/// One finding.
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub struct Finding {
    /// Severity.
    pub severity: Severity,
    /// The item concerned.
    pub item: ItemRef,
    /// What is wrong and how to fix it. Shared, not copied: an unchanged
    /// warning of the last solve is the same text (a large building has
    /// tens of thousands of them).
    pub message: Arc<str>,
}

impl Finding {
    /// An error.
    #[must_use]
    pub fn error(item: ItemRef, message: impl Into<Arc<str>>) -> Self {
        Self { severity: Severity::Error, item, message: message.into() }
    }
    /// A warning.
    #[must_use]
    pub fn warning(item: ItemRef, message: impl Into<Arc<str>>) -> Self {
        Self { severity: Severity::Warning, item, message: message.into() }
    }
    /// A note.
    #[must_use]
    pub fn note(item: ItemRef, message: impl Into<Arc<str>>) -> Self {
        Self { severity: Severity::Note, item, message: message.into() }
    }
}
