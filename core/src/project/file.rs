//! The project file: RON text with a format version, loaded in two steps
//! (raw [`ProjectFile`] → validated [`Project`]) and saved atomically.
//!
//! The fields, units and defaults are documented in `docs/file-format.md`.

mod diagnose;

use std::collections::BTreeSet;
use std::io::Write;
use std::path::{Path, PathBuf};

use serde::{Deserialize, Serialize};
use thiserror::Error;

use super::edit::{check_drawn_length, check_text, node_texts, validate_node_kind, validate_run_props};
use super::limits;
use super::{DesignSettings, Level, Node, NodeKind, Project, Run};
use diagnose::parse_message;

/// Format tag at the top of every project file.
pub const FORMAT_TAG: &str = "flowrise-project";
/// Format version written by this build; older versions are migrated, newer
/// ones refused.
pub const FORMAT_VERSION: u32 = 1;
/// Largest project file accepted, bytes (guards memory on hostile input).
pub const MAX_FILE_BYTES: u64 = 256 * 1024 * 1024;
/// Deepest nesting of brackets the parser accepts (a project file nests
/// about 8 deep; the limit keeps hostile files off the stack).
pub const MAX_NESTING: usize = 64;

/// The project file as stored (our own layout, not a library's).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ProjectFile {
    /// Always [`FORMAT_TAG`].
    pub format: String,
    /// Format version.
    pub format_version: u32,
    /// Project name.
    pub name: String,
    /// Design settings (missing fields take their defaults).
    #[serde(default)]
    pub settings: DesignSettings,
    /// Levels.
    pub levels: Vec<Level>,
    /// Nodes.
    pub nodes: Vec<Node>,
    /// Runs.
    pub runs: Vec<Run>,
}

/// Why a project could not be loaded or saved.
#[derive(Debug, Error)]
pub enum FileError {
    /// Reading or writing failed.
    #[error("{path}: {source}")]
    Io {
        /// File.
        path: PathBuf,
        /// Cause.
        source: std::io::Error,
    },
    /// The text is not a valid project file.
    #[error("{path}: line {line}, column {column}: {message}")]
    Parse {
        /// File (or "text").
        path: String,
        /// 1-based line.
        line: usize,
        /// 1-based column.
        column: usize,
        /// What the parser found.
        message: String,
    },
    /// A format this build cannot read.
    #[error("{0}")]
    Version(String),
    /// The file parsed but an item in it is invalid.
    #[error("{item}: {message}")]
    Invalid {
        /// The item ("run R12", "node N4", "level L2").
        item: String,
        /// What is wrong and how to fix it.
        message: String,
    },
    /// The file is larger than [`MAX_FILE_BYTES`].
    #[error("{path}: {bytes} bytes is larger than the {max} bytes a project file may have")]
    TooLarge {
        /// File.
        path: PathBuf,
        /// Its size.
        bytes: u64,
        /// The limit.
        max: u64,
    },
}

/// An edit's refusal as a file error (its item named once).
fn from_edit(e: super::edit::EditError) -> FileError {
    match e {
        super::edit::EditError::Invalid { item, message } => FileError::Invalid { item, message },
        super::edit::EditError::Missing(item) => bad(item, "does not exist"),
    }
}

fn bad(item: impl Into<String>, message: impl Into<String>) -> FileError {
    FileError::Invalid { item: item.into(), message: message.into() }
}

impl Project {
    /// The file struct of this project (sorted by id: deterministic output).
    #[must_use]
    pub fn to_file(&self) -> ProjectFile {
        ProjectFile {
            format: FORMAT_TAG.to_owned(),
            format_version: FORMAT_VERSION,
            name: self.name.clone(),
            settings: self.settings.clone(),
            levels: self.levels.clone(),
            nodes: self.nodes().cloned().collect(),
            runs: self.runs().cloned().collect(),
        }
    }

    /// RON text of this project.
    ///
    /// # Errors
    /// [`FileError::Invalid`] if serialisation fails (non-finite numbers).
    pub fn to_ron(&self) -> Result<String, FileError> {
        let cfg = ron::ser::PrettyConfig::new().depth_limit(8).indentor("  ".to_owned());
        ron::ser::to_string_pretty(&self.to_file(), cfg).map_err(|e| bad("project", format!("cannot write: {e}")))
    }

    /// Parse and validate project text.
    ///
    /// # Errors
    /// [`FileError`] naming the line or the item and the fix.
    pub fn from_ron(text: &str) -> Result<Self, FileError> {
        Self::from_ron_named(text, "text")
    }

    fn from_ron_named(text: &str, path: &str) -> Result<Self, FileError> {
        // A byte-order mark some editors put at the start of UTF-8 text is
        // not part of the project (ron would refuse it).
        let text = text.strip_prefix('\u{feff}').unwrap_or(text);
        // Explicit nesting limit (ron 0.12 defaults to 128 too): a project
        // nests about 8 deep, so hostile `((((…` fails fast without
        // recursing deeply on the stack.
        let opts = ron::Options::default().with_recursion_limit(MAX_NESTING);
        let file: ProjectFile = match opts.from_str(text) {
            Ok(f) => f,
            Err(e) => {
                // A file from a newer build may fail to parse on fields we do
                // not know: say that, rather than the parse error.
                if let Ok(head) = opts.from_str::<HeadOnly>(text) {
                    if head.format != FORMAT_TAG {
                        return Err(FileError::Version(format!(
                            "{path}: this is not a flowrise project (format \"{}\")",
                            head.format
                        )));
                    }
                    if head.format_version > FORMAT_VERSION {
                        return Err(newer(path, head.format_version));
                    }
                    if head.format_version < FORMAT_VERSION {
                        // An older layout that does not parse as the current
                        // one: only a migration step could read it.
                        return Err(older(head.format_version));
                    }
                }
                return Err(FileError::Parse {
                    path: path.to_owned(),
                    line: e.span.start.line,
                    column: e.span.start.col,
                    message: parse_message(text, &e),
                });
            }
        };
        if file.format_version > FORMAT_VERSION {
            return Err(newer(path, file.format_version));
        }
        Self::from_file(file)
    }

    /// Validate a raw file struct into a project.
    ///
    /// # Errors
    /// [`FileError::Invalid`] naming the first bad item and the fix.
    pub fn from_file(file: ProjectFile) -> Result<Self, FileError> {
        if file.format != FORMAT_TAG {
            return Err(FileError::Version(format!("not a flowrise project (format \"{}\")", file.format)));
        }
        if file.format_version > FORMAT_VERSION {
            return Err(FileError::Version(format!(
                "format version {} is not one this build reads (1 to {FORMAT_VERSION})",
                file.format_version
            )));
        }
        let from_version = file.format_version;
        let file = migrate(file, from_version)?;
        if let Some(p) = file.settings.problems().first() {
            return Err(bad(format!("settings: {}", p.field), p.message.clone()));
        }
        check_text("project", "name", &file.name).map_err(from_edit)?;
        if file.levels.is_empty() {
            return Err(bad("levels", "the project has no level — add at least one"));
        }
        let mut level_ids = BTreeSet::new();
        for l in &file.levels {
            if !level_ids.insert(l.id) {
                return Err(bad(format!("level {}", l.id), "this id is used twice — give each level its own id"));
            }
            check_text(&format!("level {}", l.id), "name", &l.name).map_err(from_edit)?;
            if let Some((field, message)) = l.underlay.as_ref().and_then(|u| u.problems().into_iter().next()) {
                return Err(bad(format!("level {} ({}) plan underlay, {field}", l.id, l.name), message));
            }
            if !(limits::ELEVATION_M.contains(l.elevation_m)) {
                return Err(bad(
                    format!("level {} ({})", l.id, l.name),
                    limits::ELEVATION_M.check(l.elevation_m).err().unwrap_or_default(),
                ));
            }
        }
        let mut p = Self::new(&file.name);
        p.settings = file.settings;
        p.levels = file.levels;
        p.levels.sort_by(|a, b| a.elevation_m.total_cmp(&b.elevation_m));
        p.reserve(file.nodes.len(), file.runs.len());
        let mut sources = 0usize;
        for n in file.nodes {
            // Texts first: the label below shows the name.
            for (field, text) in node_texts(&n.kind) {
                check_text(&format!("{} {}", n.kind.word(), n.id), field, text).map_err(from_edit)?;
            }
            let label = n.label();
            if p.node(n.id).is_some() {
                return Err(bad(format!("node {}", n.id), "this id is used twice — give each node its own id"));
            }
            if !level_ids.contains(&n.level) {
                return Err(bad(
                    label,
                    format!("level {} does not exist — put the node on an existing level", n.level),
                ));
            }
            if !(limits::PLAN_COORDINATE_M.contains(n.pos.x_m) && limits::PLAN_COORDINATE_M.contains(n.pos.y_m)) {
                return Err(bad(
                    label,
                    format!(
                        "position ({}, {}) m is not a finite point within 100 km",
                        limits::readable(n.pos.x_m),
                        limits::readable(n.pos.y_m)
                    ),
                ));
            }
            validate_node_kind(&label, &n.kind).map_err(from_edit)?;
            if matches!(n.kind, NodeKind::Source(_)) {
                sources += 1;
                if sources > 1 {
                    return Err(bad(label, "a second heat source — one source per network; remove one"));
                }
            }
            p.insert_node(n);
        }
        for r in file.runs {
            let item = format!("run {}", r.id);
            if p.run(r.id).is_some() {
                return Err(bad(item, "this id is used twice — give each run its own id"));
            }
            for end in [r.a, r.b] {
                if p.node(end).is_none() {
                    return Err(bad(
                        item.clone(),
                        format!("its end {end} does not exist — reconnect or delete the run"),
                    ));
                }
            }
            if r.a == r.b {
                return Err(bad(item, "both ends are the same node — delete the run"));
            }
            for v in &r.vertices {
                if !(limits::PLAN_COORDINATE_M.contains(v.x_m) && limits::PLAN_COORDINATE_M.contains(v.y_m)) {
                    let (x, y) = (limits::readable(v.x_m), limits::readable(v.y_m));
                    return Err(bad(item, format!("bend point ({x}, {y}) m is not a finite point within 100 km")));
                }
            }
            validate_run_props(r.id, &r.props).map_err(from_edit)?;
            let level = p.node(r.a).map(|n| n.level);
            if r.props.length_override_m.is_none() {
                let drawn = p.drawn_length_m(&r);
                if drawn <= 0.0 {
                    let lv = level.map_or_else(String::new, |l| format!(" on level {l}"));
                    return Err(bad(format!("{item}{lv}"), "length 0 m — draw its ends apart or give it a length > 0"));
                }
                check_drawn_length(r.id, drawn).map_err(from_edit)?;
            }
            p.insert_run(r);
        }
        for e in p.emitters() {
            if p.runs_at(e).len() > 1 {
                let label = p.node(e).map_or_else(|| e.to_string(), Node::label);
                return Err(bad(label, "an emitter connects by one run but has several — delete the extra runs"));
            }
        }
        Ok(p)
    }

    /// Load a project file.
    ///
    /// # Errors
    /// [`FileError`] naming the file, line or item and the fix.
    pub fn load(path: &Path) -> Result<Self, FileError> {
        let meta = std::fs::metadata(path).map_err(|source| FileError::Io { path: path.to_owned(), source })?;
        if meta.len() > MAX_FILE_BYTES {
            return Err(FileError::TooLarge { path: path.to_owned(), bytes: meta.len(), max: MAX_FILE_BYTES });
        }
        let text = std::fs::read_to_string(path).map_err(|source| FileError::Io { path: path.to_owned(), source })?;
        Self::from_ron_named(&text, &path.display().to_string())
    }

    /// Save atomically: write a temporary file beside `path`, flush it to
    /// disk, then rename it over `path`. A crash leaves the old file or the
    /// new one, never a mix.
    ///
    /// # Errors
    /// [`FileError::Io`] when the directory is not writable or the disk full.
    pub fn save(&self, path: &Path) -> Result<(), FileError> {
        let text = self.to_ron()?;
        write_atomic(path, text.as_bytes())
    }
}

/// Bring a file of an older format version up to [`FORMAT_VERSION`], one
/// version step at a time.
///
/// Version 1 is the first format: for it this is a no-op. Version 0 was never
/// written by any build and is refused with a message saying so. When the
/// format changes, add a step per old version here (`1 => …` turning a
/// version 1 file into a version 2 one); a change the current
/// [`ProjectFile`] cannot even parse (a renamed or retyped field) needs the
/// step on the raw text before the typed parse instead.
///
/// # Errors
/// [`FileError::Version`] for a version no step leads from.
pub fn migrate(file: ProjectFile, from_version: u32) -> Result<ProjectFile, FileError> {
    match from_version {
        FORMAT_VERSION => Ok(ProjectFile { format_version: FORMAT_VERSION, ..file }),
        v if v > FORMAT_VERSION => Err(FileError::Version(format!(
            "format version {v} is newer than this build reads (up to {FORMAT_VERSION}) — update flowrise to open it"
        ))),
        v => Err(older(v)),
    }
}

fn older(version: u32) -> FileError {
    FileError::Version(format!(
        "format version {version} is older than the first flowrise project format (1) and cannot be migrated"
    ))
}

/// The head of a project file; serde ignores every other field.
#[derive(Deserialize)]
struct HeadOnly {
    format: String,
    format_version: u32,
}

fn newer(path: &str, version: u32) -> FileError {
    FileError::Version(format!(
        "{path}: written by a newer flowrise (format version {version}; this build reads up to {FORMAT_VERSION}) — \
         update flowrise to open it"
    ))
}

/// Write `bytes` to `path` atomically (temporary file + fsync + rename).
///
/// Every file flowrise writes goes through here. When `path` is a symbolic
/// link, the file it points to is replaced (the link stays a link); when
/// the file exists, the new one gets its permissions.
///
/// # Errors
/// [`FileError::Io`] naming the path.
pub fn write_atomic(path: &Path, bytes: &[u8]) -> Result<(), FileError> {
    let io = |source| FileError::Io { path: path.to_owned(), source };
    let target = resolve_links(path).map_err(io)?;
    let target = target.as_path();
    let dir = target.parent().filter(|d| !d.as_os_str().is_empty()).unwrap_or_else(|| Path::new("."));
    let name = target.file_name().map_or_else(|| "project".into(), |n| n.to_string_lossy().into_owned());
    let tmp = dir.join(format!(".{name}.{}.tmp", std::process::id()));
    let permissions = std::fs::metadata(target).ok().map(|m| m.permissions());
    let result = (|| {
        let mut f = std::fs::File::create(&tmp)?;
        f.write_all(bytes)?;
        if let Some(perm) = permissions {
            f.set_permissions(perm)?;
        }
        f.sync_all()?;
        drop(f);
        std::fs::rename(&tmp, target)?;
        // Make the rename itself durable where the platform allows it.
        if let Ok(d) = std::fs::File::open(dir) {
            d.sync_all().ok();
        }
        Ok(())
    })();
    if result.is_err() {
        std::fs::remove_file(&tmp).ok();
    } else {
        remove_stale_temps(dir, &name);
    }
    result.map_err(io)
}

/// The file a chain of symbolic links at `path` ends in (`path` itself
/// when it is not a link or does not exist yet). A link to a missing file
/// gives the missing file, which the write then creates.
fn resolve_links(path: &Path) -> std::io::Result<PathBuf> {
    let mut current = path.to_path_buf();
    // Links nest only so deep (the kernel's own limit is 40).
    for _ in 0..40 {
        match std::fs::symlink_metadata(&current) {
            Ok(m) if m.file_type().is_symlink() => {
                let next = std::fs::read_link(&current)?;
                current = match current.parent() {
                    Some(dir) if next.is_relative() => dir.join(next),
                    _ => next,
                };
            }
            _ => return Ok(current),
        }
    }
    Err(std::io::Error::other("too many levels of symbolic links"))
}

/// True when `a` and `b` name the same file (after links, `.` and `..`;
/// hard links too on Unix). A path that does not exist yet is compared by
/// its folder and name.
#[must_use]
pub fn same_file(a: &Path, b: &Path) -> bool {
    #[cfg(unix)]
    {
        use std::os::unix::fs::MetadataExt;
        if let (Ok(x), Ok(y)) = (std::fs::metadata(a), std::fs::metadata(b)) {
            return x.dev() == y.dev() && x.ino() == y.ino();
        }
    }
    let canonical = |p: &Path| -> Option<PathBuf> {
        let p = resolve_links(p).ok()?;
        if let Ok(c) = p.canonicalize() {
            return Some(c);
        }
        let dir = p.parent().filter(|d| !d.as_os_str().is_empty()).unwrap_or_else(|| Path::new("."));
        Some(dir.canonicalize().ok()?.join(p.file_name()?))
    };
    match (canonical(a), canonical(b)) {
        (Some(x), Some(y)) => x == y,
        _ => false,
    }
}

/// Remove temporary files `.NAME.PID.tmp` left by saves that were killed
/// (their process no longer runs). Where `/proc` is not available, only
/// files older than a day go. Best effort: errors are ignored.
fn remove_stale_temps(dir: &Path, name: &str) {
    let prefix = format!(".{name}.");
    let Ok(entries) = std::fs::read_dir(dir) else { return };
    let procfs = Path::new("/proc/self").exists();
    for e in entries.flatten() {
        let file = e.file_name();
        let file = file.to_string_lossy();
        let Some(pid) = file.strip_prefix(&prefix).and_then(|r| r.strip_suffix(".tmp")) else { continue };
        let Ok(pid) = pid.parse::<u32>() else { continue };
        let stale = if procfs {
            !Path::new("/proc").join(pid.to_string()).exists()
        } else {
            e.metadata()
                .and_then(|m| m.modified())
                .ok()
                .and_then(|t| t.elapsed().ok())
                .is_some_and(|age| age > std::time::Duration::from_secs(86_400))
        };
        if stale && pid != std::process::id() {
            std::fs::remove_file(e.path()).ok();
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn temp_dir(tag: &str) -> PathBuf {
        let d = std::env::temp_dir().join(format!("flowrise-file-{tag}-{}", std::process::id()));
        std::fs::remove_dir_all(&d).ok();
        std::fs::create_dir_all(&d).unwrap();
        d
    }

    /// Issue 20 item 2: writing through a symbolic link replaces the file it
    /// points to and leaves the link a link.
    #[cfg(unix)]
    #[test]
    fn a_write_through_a_symlink_keeps_the_link() {
        let d = temp_dir("link");
        let real = d.join("real.csv");
        std::fs::write(&real, "old").unwrap();
        let link = d.join("link.csv");
        std::os::unix::fs::symlink("real.csv", &link).unwrap();
        write_atomic(&link, b"new").unwrap();
        assert!(std::fs::symlink_metadata(&link).unwrap().file_type().is_symlink());
        assert_eq!(std::fs::read_to_string(&real).unwrap(), "new");
        assert!(same_file(&link, &real));
        std::fs::remove_dir_all(&d).ok();
    }

    /// The replaced file keeps its permissions.
    #[cfg(unix)]
    #[test]
    fn a_write_keeps_the_permissions_of_the_file_it_replaces() {
        use std::os::unix::fs::PermissionsExt;
        let d = temp_dir("perm");
        let f = d.join("shared.csv");
        std::fs::write(&f, "old").unwrap();
        std::fs::set_permissions(&f, std::fs::Permissions::from_mode(0o640)).unwrap();
        write_atomic(&f, b"new").unwrap();
        assert_eq!(std::fs::metadata(&f).unwrap().permissions().mode() & 0o777, 0o640);
        std::fs::remove_dir_all(&d).ok();
    }

    #[test]
    fn same_file_sees_through_dot_dot_and_missing_files() {
        let d = temp_dir("same");
        std::fs::create_dir_all(d.join("sub")).unwrap();
        let f = d.join("p.ron");
        std::fs::write(&f, "x").unwrap();
        assert!(same_file(&f, &d.join("sub").join("..").join("p.ron")));
        assert!(!same_file(&f, &d.join("q.ron")));
        assert!(same_file(&d.join("q.ron"), &d.join("sub").join("..").join("q.ron")));
        std::fs::remove_dir_all(&d).ok();
    }
}
