//! Autosave, crash recovery and the crash report.
//!
//! While the window is open, each session keeps its unsaved work in a
//! recovery folder (by default `recovery/` under eframe's storage folder,
//! e.g. `~/.local/share/flowrise/recovery` on Linux):
//!
//! - `session-ID.ron` — the project as an ordinary flowrise project file
//!   (it opens with File → Open too), written atomically at a set interval
//!   and after every N edits while the document has unsaved changes, and
//!   removed once it is saved or the changes are undone;
//! - `session-ID.meta.json` — which file the work belongs to;
//! - `session-ID.lock` — locked by the running session. The operating
//!   system drops the lock when the process ends in any way, so on start a
//!   project file whose lock can be taken belongs to a session that ended
//!   without closing cleanly: the window offers to recover it.
//!
//! A clean close removes the session's files. A panic writes
//! `crash-TIME.txt` beside them, naming the last autosave.

use std::fs::{File, OpenOptions};
use std::path::{Path, PathBuf};
use std::sync::Mutex;
use std::time::{Duration, Instant, SystemTime, UNIX_EPOCH};

use flowrise_core::project::Project;
use flowrise_core::project::file::write_atomic;
use serde::{Deserialize, Serialize};

/// Autosave policy.
#[derive(Debug, Clone, PartialEq)]
pub struct RecoveryConfig {
    /// Folder of the recovery files.
    pub dir: PathBuf,
    /// Write unsaved work at least this often.
    pub interval: Duration,
    /// …and after this many edits, whichever comes first.
    pub every_edits: u64,
}

impl RecoveryConfig {
    /// Interval of the default policy (common practice for desktop editors;
    /// no standard applies).
    pub const DEFAULT_INTERVAL: Duration = Duration::from_secs(60);
    /// Edit count of the default policy (common practice).
    pub const DEFAULT_EVERY_EDITS: u64 = 20;

    /// The default policy in `dir`.
    #[must_use]
    pub fn in_dir(dir: impl Into<PathBuf>) -> Self {
        Self { dir: dir.into(), interval: Self::DEFAULT_INTERVAL, every_edits: Self::DEFAULT_EVERY_EDITS }
    }

    /// The default folder: `recovery/` in eframe's storage folder of the app.
    #[must_use]
    pub fn default_dir() -> Option<PathBuf> {
        eframe::storage_dir("flowrise").map(|d| d.join("recovery"))
    }
}

/// Which file the autosaved work belongs to.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
struct Meta {
    /// The project's own file, if it had one (absolute and canonical since
    /// the path as typed could name another file from another folder).
    original_path: Option<PathBuf>,
    /// That file as this session last read or wrote it (missing in
    /// autosaves of older builds).
    #[serde(default)]
    original_stamp: Option<FileStamp>,
}

/// What a project file looked like when a session last read or wrote it:
/// enough to tell, on recovery, that someone changed or replaced it since.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub struct FileStamp {
    /// Size, bytes.
    pub len: u64,
    /// Modification time, ns since the Unix epoch (0 when unknown).
    pub modified_unix_ns: u64,
    /// FNV-1a hash of the content.
    pub content_hash: u64,
}

impl FileStamp {
    /// The stamp of the file at `path` now (`None`: missing or unreadable).
    #[must_use]
    pub fn of(path: &Path) -> Option<Self> {
        let meta = std::fs::metadata(path).ok()?;
        if !meta.is_file() || meta.len() > flowrise_core::project::file::MAX_FILE_BYTES {
            return None;
        }
        let bytes = std::fs::read(path).ok()?;
        let modified_unix_ns = meta
            .modified()
            .ok()
            .and_then(|t| t.duration_since(UNIX_EPOCH).ok())
            .map_or(0, |d| u64::try_from(d.as_nanos()).unwrap_or(u64::MAX));
        // FNV-1a, 64 bit (offset basis and prime of the published algorithm).
        let content_hash =
            bytes.iter().fold(0xcbf2_9ce4_8422_2325_u64, |h, &b| (h ^ u64::from(b)).wrapping_mul(0x0100_0000_01b3));
        Some(Self { len: bytes.len() as u64, modified_unix_ns, content_hash })
    }
}

/// `path` made absolute and canonical (links, `.` and `..` resolved) when
/// it exists, else absolute against the current folder. A document's path
/// is kept this way so that the autosave, Recent files and the title name
/// one file whatever folder flowrise is started from.
#[must_use]
pub fn absolute_path(path: &Path) -> PathBuf {
    std::fs::canonicalize(path).or_else(|_| std::path::absolute(path)).unwrap_or_else(|_| path.to_path_buf())
}

/// Why recovered work must not be saved over its file without asking.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct SaveConflict {
    /// The file the work belongs to.
    pub path: PathBuf,
    /// What happened to it, for people ("changed on disk since …").
    pub reason: String,
}

impl Orphan {
    /// Whether saving the recovered work over its original file needs a
    /// question first: the file is gone, was changed since the autosave,
    /// or the autosave names it without its folder (older builds).
    #[must_use]
    pub fn save_conflict(&self) -> Option<SaveConflict> {
        let path = self.original_path.clone()?;
        let reason = if path.is_relative() {
            "the autosave names this file without its folder — choose where to save".to_owned()
        } else {
            match FileStamp::of(&path) {
                None => "is no longer there (moved or deleted) since the work was autosaved".to_owned(),
                Some(now) if self.original_stamp == Some(now) => return None,
                Some(_) => "was changed on disk since this work was autosaved".to_owned(),
            }
        };
        Some(SaveConflict { path, reason })
    }
}

/// Work left behind by a session that did not close cleanly.
#[derive(Debug, Clone)]
pub struct Orphan {
    /// The autosaved project file.
    pub project_path: PathBuf,
    /// The project's own file, if it had one.
    pub original_path: Option<PathBuf>,
    /// That file as the crashed session last read or wrote it.
    pub original_stamp: Option<FileStamp>,
    /// What has happened to that file since (see [`Orphan::save_conflict`]),
    /// found when the offer was made.
    pub conflict: Option<SaveConflict>,
    /// When it was last written.
    pub modified: Option<SystemTime>,
    /// Project name and size, or why it does not load.
    pub summary: Result<String, String>,
    stem: String,
}

impl Orphan {
    /// Load the autosaved project.
    ///
    /// # Errors
    /// The load error, as text.
    pub fn load(&self) -> Result<Project, String> {
        Project::load(&self.project_path).map_err(|e| e.to_string())
    }

    /// Remove its files.
    pub fn remove(&self, dir: &Path) {
        for suffix in [".ron", ".meta.json", ".lock"] {
            std::fs::remove_file(dir.join(format!("{}{suffix}", self.stem))).ok();
        }
    }

    /// How long ago it was written, for people.
    #[must_use]
    pub fn age_text(&self) -> String {
        let Some(secs) = self.modified.and_then(|m| m.elapsed().ok()).map(|d| d.as_secs()) else {
            return "at an unknown time".to_owned();
        };
        match secs {
            0..60 => format!("{secs} s ago"),
            60..7200 => format!("{} min ago", secs / 60),
            7200..172_800 => format!("{} h ago", secs / 3600),
            _ => format!("{} days ago", secs / 86_400),
        }
    }
}

/// Find work left by sessions that ended without closing cleanly, newest
/// first. Sessions still running (their lock is held) are left alone.
#[must_use]
pub fn find_orphans(dir: &Path) -> Vec<Orphan> {
    let Ok(entries) = std::fs::read_dir(dir) else { return Vec::new() };
    let mut out = Vec::new();
    for e in entries.flatten() {
        let name = e.file_name().to_string_lossy().into_owned();
        let Some(stem) = name.strip_suffix(".ron") else { continue };
        if !stem.starts_with("session-") {
            continue;
        }
        if session_is_alive(&dir.join(format!("{stem}.lock"))) {
            continue;
        }
        let project_path = e.path();
        let meta: Meta = std::fs::read_to_string(dir.join(format!("{stem}.meta.json")))
            .ok()
            .and_then(|t| serde_json::from_str(&t).ok())
            .unwrap_or_default();
        let summary = Project::load(&project_path)
            .map(|p| format!("“{}” — {} emitters, {} runs", p.name, p.emitters().len(), p.run_count()))
            .map_err(|e| e.to_string());
        let mut orphan = Orphan {
            project_path,
            original_path: meta.original_path,
            original_stamp: meta.original_stamp,
            conflict: None,
            modified: e.metadata().and_then(|m| m.modified()).ok(),
            summary,
            stem: stem.to_owned(),
        };
        orphan.conflict = orphan.save_conflict();
        out.push(orphan);
    }
    out.sort_by_key(|o| std::cmp::Reverse(o.modified));
    out
}

/// Remove the files of sessions that ended without closing cleanly and
/// left no work behind: a `session-*.lock` (and its `.meta.json`) whose
/// lock nobody holds and that has no `.ron` beside it. Work that is there
/// stays for the recovery offer. Returns how many sessions were cleaned.
pub fn remove_stale_locks(dir: &Path) -> usize {
    let Ok(entries) = std::fs::read_dir(dir) else { return 0 };
    let mut cleaned = 0;
    for e in entries.flatten() {
        let name = e.file_name().to_string_lossy().into_owned();
        let Some(stem) = name.strip_suffix(".lock") else { continue };
        if !stem.starts_with("session-") || dir.join(format!("{stem}.ron")).exists() {
            continue;
        }
        if session_is_alive(&e.path()) {
            continue;
        }
        std::fs::remove_file(e.path()).ok();
        std::fs::remove_file(dir.join(format!("{stem}.meta.json"))).ok();
        cleaned += 1;
    }
    cleaned
}

/// True when another open session holds the lock file.
fn session_is_alive(lock_path: &Path) -> bool {
    let Ok(f) = OpenOptions::new().read(true).write(true).open(lock_path) else { return false };
    match f.try_lock() {
        Ok(()) => {
            f.unlock().ok();
            false
        }
        Err(std::fs::TryLockError::WouldBlock) => true,
        // Locking unsupported here: treat the work as orphaned (offering a
        // recovery too many is better than losing one).
        Err(std::fs::TryLockError::Error(_)) => false,
    }
}

/// What the last autosave wrote; read by the crash report.
#[derive(Debug, Clone, Default)]
struct LastWrite {
    path: Option<PathBuf>,
    at: Option<SystemTime>,
    dir: Option<PathBuf>,
}

static LAST_WRITE: Mutex<LastWrite> = Mutex::new(LastWrite { path: None, at: None, dir: None });

fn note_write(dir: &Path, path: Option<&Path>) {
    if let Ok(mut w) = LAST_WRITE.lock() {
        w.dir = Some(dir.to_path_buf());
        w.path = path.map(Path::to_path_buf);
        w.at = path.map(|_| SystemTime::now());
    }
}

/// The autosaver of one window session.
#[derive(Debug)]
pub struct Autosaver {
    cfg: RecoveryConfig,
    stem: String,
    _lock: Option<File>,
    /// Revision last written or being written (None: nothing on disk).
    written_revision: Option<u64>,
    /// Revision at the previous write or removal; edits are counted from it.
    base_revision: u64,
    last_write: Instant,
    meta: Option<Meta>,
    /// A write running on a worker thread: its revision and handle.
    in_flight: Option<(u64, std::thread::JoinHandle<Result<(), String>>)>,
    /// Serialise and write on a worker thread (off in tests).
    pub background: bool,
    /// The last write error, shown once in the status line.
    pub error: Option<String>,
}

/// Serialise and write one autosave.
fn write_project(project: &Project, path: &Path) -> Result<(), String> {
    let text = project.to_ron().map_err(|e| e.to_string())?;
    write_atomic(path, text.as_bytes()).map_err(|e| e.to_string())
}

impl Autosaver {
    /// Start a session in `cfg.dir` (created if missing).
    ///
    /// # Errors
    /// Why the folder or the session's lock cannot be made; the window then
    /// runs without autosave and says so.
    pub fn start(cfg: RecoveryConfig, revision: u64) -> Result<Self, String> {
        std::fs::create_dir_all(&cfg.dir)
            .map_err(|e| format!("cannot create the recovery folder {}: {e}", cfg.dir.display()))?;
        let nanos = SystemTime::now().duration_since(UNIX_EPOCH).map_or(0, |d| d.as_nanos());
        let stem = format!("session-{}-{nanos:x}", std::process::id());
        let lock_path = cfg.dir.join(format!("{stem}.lock"));
        let lock = OpenOptions::new()
            .create(true)
            .truncate(false)
            .read(true)
            .write(true)
            .open(&lock_path)
            .map_err(|e| format!("cannot create {}: {e}", lock_path.display()))?;
        // Without the lock another window could take this session's work for
        // a crashed one; autosave still runs.
        let locked = lock.try_lock().is_ok();
        note_write(&cfg.dir, None);
        Ok(Self {
            cfg,
            stem,
            _lock: locked.then_some(lock),
            written_revision: None,
            base_revision: revision,
            last_write: Instant::now(),
            meta: None,
            in_flight: None,
            background: false,
            error: None,
        })
    }

    /// The folder of the recovery files.
    #[must_use]
    pub fn dir(&self) -> &Path {
        &self.cfg.dir
    }

    /// This session's autosave file.
    #[must_use]
    pub fn project_path(&self) -> PathBuf {
        self.cfg.dir.join(format!("{}.ron", self.stem))
    }

    /// Called every frame: write `project` when it has unsaved changes and
    /// the interval has passed or enough edits were made; remove the file
    /// when there is nothing unsaved. `hold` defers a due write (a drag in
    /// progress). Returns how long until a pending write is due, for a
    /// repaint.
    pub fn tick(
        &mut self,
        project: &Project,
        dirty: bool,
        original: Option<(&Path, Option<FileStamp>)>,
        hold: bool,
    ) -> Option<Duration> {
        self.collect(false);
        if !dirty {
            self.clear(project.revision);
            return None;
        }
        if self.written_revision == Some(project.revision) {
            return None;
        }
        let edits = project.revision.abs_diff(self.base_revision);
        let elapsed = self.last_write.elapsed();
        if (edits >= self.cfg.every_edits || elapsed >= self.cfg.interval) && !hold && self.in_flight.is_none() {
            self.write(project, original);
            return None;
        }
        Some(self.cfg.interval.saturating_sub(elapsed).max(Duration::from_millis(200)))
    }

    /// Write now (also used right after a recovery, so the recovered work
    /// is safe before the old files go). With `background` on, the project
    /// is serialised and written on a worker thread.
    pub fn write(&mut self, project: &Project, original: Option<(&Path, Option<FileStamp>)>) {
        self.collect(true);
        self.last_write = Instant::now();
        self.base_revision = project.revision;
        let meta = Meta {
            original_path: original.map(|(p, _)| absolute_path(p)),
            original_stamp: original.and_then(|(_, s)| s),
        };
        if self.meta.as_ref() != Some(&meta) {
            let written = serde_json::to_string(&meta).map_err(|e| e.to_string()).and_then(|text| {
                write_atomic(&self.cfg.dir.join(format!("{}.meta.json", self.stem)), text.as_bytes())
                    .map_err(|e| e.to_string())
            });
            match written {
                Ok(()) => self.meta = Some(meta),
                Err(e) => {
                    self.error = Some(format!("autosave failed ({e}); save your work with Save As"));
                    return;
                }
            }
        }
        let path = self.project_path();
        self.written_revision = Some(project.revision);
        if self.background {
            let snapshot = project.clone();
            let handle = std::thread::spawn(move || write_project(&snapshot, &path));
            self.in_flight = Some((project.revision, handle));
        } else {
            let result = write_project(project, &path);
            self.done(result);
        }
    }

    /// Take the result of a write on the worker thread (wait for it if
    /// `wait`).
    fn collect(&mut self, wait: bool) {
        if self.in_flight.as_ref().is_some_and(|(_, h)| wait || h.is_finished())
            && let Some((_, h)) = self.in_flight.take()
        {
            let result = h.join().unwrap_or_else(|_| Err("the autosave worker stopped".to_owned()));
            self.done(result);
        }
    }

    fn done(&mut self, result: Result<(), String>) {
        match result {
            Ok(()) => {
                self.error = None;
                note_write(&self.cfg.dir, Some(&self.project_path()));
            }
            Err(e) => {
                self.written_revision = None;
                self.error = Some(format!("autosave failed ({e}); save your work with Save As"));
            }
        }
    }

    /// Remove this session's project file (nothing unsaved any more).
    fn clear(&mut self, revision: u64) {
        self.base_revision = revision;
        self.last_write = Instant::now();
        if self.written_revision.is_some() || self.in_flight.is_some() {
            self.collect(true);
            self.written_revision = None;
            std::fs::remove_file(self.project_path()).ok();
            note_write(&self.cfg.dir, None);
        }
    }

    /// A clean close: remove all of this session's files.
    pub fn finish(&mut self) {
        self.collect(true);
        for suffix in [".ron", ".meta.json", ".lock"] {
            std::fs::remove_file(self.cfg.dir.join(format!("{}{suffix}", self.stem))).ok();
        }
        self.written_revision = None;
        note_write(&self.cfg.dir, None);
    }
}

/// Install a panic hook that writes a crash report (message, place,
/// backtrace and the last autosave) into the recovery folder and prints
/// where it is, then runs the previous hook.
pub fn install_crash_hook() {
    let previous = std::panic::take_hook();
    std::panic::set_hook(Box::new(move |info| {
        let message = info
            .payload()
            .downcast_ref::<&str>()
            .map(|s| (*s).to_owned())
            .or_else(|| info.payload().downcast_ref::<String>().cloned())
            .unwrap_or_else(|| "(no message)".to_owned());
        let place = info.location().map_or_else(String::new, |l| format!("{}:{}", l.file(), l.line()));
        if let Some(path) = write_crash_report(&message, &place) {
            eprintln!("flowrise stopped on an internal error; crash report: {}", path.display());
        }
        previous(info);
    }));
}

/// Write the crash report; returns its path.
fn write_crash_report(message: &str, place: &str) -> Option<PathBuf> {
    let last = LAST_WRITE.lock().map(|w| w.clone()).unwrap_or_default();
    let dir = last.dir.clone().or_else(RecoveryConfig::default_dir)?;
    let now = SystemTime::now().duration_since(UNIX_EPOCH).map_or(0, |d| d.as_secs());
    let recovery = match (&last.path, last.at) {
        (Some(p), Some(at)) => {
            let ago = at.elapsed().map_or_else(|_| "?".to_owned(), |d| d.as_secs().to_string());
            format!(
                "Your unsaved work was autosaved {ago} s before the crash to:\n  {}\nStart flowrise again to recover it, or open that file with File → Open.",
                p.display()
            )
        }
        _ => "No unsaved work was waiting: the last autosave was not needed or not yet due.".to_owned(),
    };
    let text = format!(
        "flowrise {} crash report (unix time {now})\n\nInternal error: {message}\nAt: {place}\n\n{recovery}\n\nBacktrace:\n{}\n",
        env!("CARGO_PKG_VERSION"),
        std::backtrace::Backtrace::force_capture()
    );
    std::fs::create_dir_all(&dir).ok()?;
    let path = dir.join(format!("crash-{now}-{}.txt", std::process::id()));
    std::fs::write(&path, text).ok()?;
    Some(path)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn temp_dir(tag: &str) -> PathBuf {
        let d = std::env::temp_dir().join(format!("flowrise-recovery-{tag}-{}", std::process::id()));
        std::fs::remove_dir_all(&d).ok();
        d
    }

    fn edited(name: &str, revision: u64) -> Project {
        let mut p = Project::new(name);
        p.revision = revision;
        p
    }

    #[test]
    fn writes_after_n_edits_and_removes_when_clean() {
        let dir = temp_dir("n-edits");
        let cfg = RecoveryConfig { dir: dir.clone(), interval: Duration::from_secs(3600), every_edits: 3 };
        let mut a = Autosaver::start(cfg, 0).unwrap();
        assert!(a.tick(&edited("x", 2), true, None, false).is_some(), "two edits: not yet");
        assert!(!a.project_path().exists());
        a.tick(&edited("x", 3), true, None, false);
        assert!(a.project_path().exists(), "three edits: written");
        assert_eq!(Project::load(&a.project_path()).unwrap().name, "x");
        a.tick(&edited("x", 3), false, None, false);
        assert!(!a.project_path().exists(), "saved: the recovery file goes");
        a.finish();
        assert_eq!(std::fs::read_dir(&dir).unwrap().count(), 0, "a clean close leaves nothing");
    }

    #[test]
    fn writes_after_the_interval() {
        let dir = temp_dir("interval");
        let cfg = RecoveryConfig { dir, interval: Duration::ZERO, every_edits: 1000 };
        let mut a = Autosaver::start(cfg, 0).unwrap();
        a.tick(&edited("y", 1), true, None, false);
        assert!(a.project_path().exists());
    }

    #[test]
    fn a_background_write_lands_and_a_clean_close_waits_for_it() {
        let dir = temp_dir("background");
        let cfg = RecoveryConfig { dir: dir.clone(), interval: Duration::ZERO, every_edits: 1 };
        let mut a = Autosaver::start(cfg, 0).unwrap();
        a.background = true;
        a.tick(&edited("bg", 1), true, None, false);
        a.collect(true);
        assert_eq!(Project::load(&a.project_path()).unwrap().name, "bg");
        a.tick(&edited("bg", 2), true, None, false);
        a.finish();
        assert_eq!(std::fs::read_dir(&dir).unwrap().count(), 0, "the worker's file did not land after the close");
    }

    #[test]
    fn a_drag_holds_the_write() {
        let dir = temp_dir("hold");
        let cfg = RecoveryConfig { dir, interval: Duration::ZERO, every_edits: 1 };
        let mut a = Autosaver::start(cfg, 0).unwrap();
        assert!(a.tick(&edited("d", 4), true, None, true).is_some());
        assert!(!a.project_path().exists());
        a.tick(&edited("d", 4), true, None, false);
        assert!(a.project_path().exists());
    }

    #[test]
    fn a_running_session_is_not_an_orphan_and_a_dropped_one_is() {
        let dir = temp_dir("orphans");
        let cfg = RecoveryConfig { dir: dir.clone(), interval: Duration::ZERO, every_edits: 1 };
        let mut a = Autosaver::start(cfg, 0).unwrap();
        a.write(&edited("left behind", 5), Some((Path::new("/somewhere/plant.ron"), None)));
        assert!(find_orphans(&dir).is_empty(), "its lock is held");
        drop(a); // no `finish`: what a crash leaves
        let found = find_orphans(&dir);
        assert_eq!(found.len(), 1);
        assert_eq!(found[0].original_path.as_deref(), Some(Path::new("/somewhere/plant.ron")));
        let conflict = found[0].save_conflict().expect("the file is not there");
        assert!(conflict.reason.contains("no longer there"), "{conflict:?}");
        assert!(found[0].summary.as_ref().unwrap().contains("left behind"));
        assert_eq!(found[0].load().unwrap().name, "left behind");
        found[0].remove(&dir);
        assert!(find_orphans(&dir).is_empty());
    }

    /// Issue 20 item 1: the autosave records the original file by its
    /// absolute path and its stamp; a file changed since then is a conflict.
    #[test]
    fn the_original_file_is_recorded_absolute_and_checked_on_recovery() {
        let dir = temp_dir("stamp");
        std::fs::create_dir_all(&dir).unwrap();
        let original = dir.join("plant.ron");
        std::fs::write(&original, "first").unwrap();
        let stamp = FileStamp::of(&original);
        let cfg = RecoveryConfig { dir: dir.join("rec"), interval: Duration::ZERO, every_edits: 1 };
        let mut a = Autosaver::start(cfg, 0).unwrap();
        let roundabout = dir.join(".").join("plant.ron");
        a.write(&edited("work", 2), Some((&roundabout, stamp)));
        drop(a);
        let found = find_orphans(&dir.join("rec"));
        assert_eq!(found[0].original_path.as_deref(), Some(absolute_path(&original).as_path()));
        assert!(found[0].original_path.as_ref().unwrap().is_absolute());
        assert_eq!(found[0].save_conflict(), None, "unchanged file: no question");
        std::fs::write(&original, "changed by someone else").unwrap();
        let conflict = found[0].save_conflict().expect("changed");
        assert!(conflict.reason.contains("changed on disk"), "{conflict:?}");
        std::fs::remove_dir_all(&dir).ok();
    }

    /// Issue 20 item 11: a lock left by a killed session with nothing to
    /// recover is removed; a live session's lock and an orphan's files stay.
    #[test]
    fn stale_locks_are_removed_and_live_ones_kept() {
        let dir = temp_dir("stale-locks");
        std::fs::create_dir_all(&dir).unwrap();
        std::fs::write(dir.join("session-1-dead.lock"), "").unwrap();
        std::fs::write(dir.join("session-1-dead.meta.json"), "{}").unwrap();
        std::fs::write(dir.join("session-2-work.lock"), "").unwrap();
        std::fs::write(dir.join("session-2-work.ron"), "(").unwrap();
        let cfg = RecoveryConfig { dir: dir.clone(), interval: Duration::ZERO, every_edits: 1 };
        let live = Autosaver::start(cfg, 0).unwrap();
        assert_eq!(remove_stale_locks(&dir), 1);
        assert!(!dir.join("session-1-dead.lock").exists() && !dir.join("session-1-dead.meta.json").exists());
        assert!(dir.join("session-2-work.lock").exists(), "work to recover keeps its files");
        assert!(dir.join(format!("{}.lock", live.stem)).exists(), "a running session keeps its lock");
        drop(live);
        std::fs::remove_dir_all(&dir).ok();
    }

    #[test]
    fn a_damaged_autosave_is_offered_with_its_error() {
        let dir = temp_dir("damaged");
        std::fs::create_dir_all(&dir).unwrap();
        std::fs::write(dir.join("session-1-ab.ron"), "(format: 1, nodes: [").unwrap();
        let found = find_orphans(&dir);
        assert_eq!(found.len(), 1);
        assert!(found[0].summary.is_err());
    }

    #[test]
    fn an_unwritable_folder_is_reported() {
        let file = temp_dir("not-a-dir");
        std::fs::write(&file, "x").unwrap();
        let e = Autosaver::start(RecoveryConfig::in_dir(file.join("sub")), 0).unwrap_err();
        assert!(e.contains("recovery folder"), "{e}");
    }
}
