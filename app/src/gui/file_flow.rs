//! Everything that reads or writes a file from the window, and every path
//! that replaces the document.
//!
//! - **Replacing the document** (New, New from building outline, Open, Open
//!   recent, Recover, Quit, closing the window) goes through
//!   [`FlowriseApp::replace_or_ask`]: with unsaved changes it asks first
//!   ([`Pending`]). *Discard* does not mark the document saved: the
//!   replacement itself does that, so a replacement abandoned later (the
//!   outline form or the file dialog cancelled) leaves the document and its
//!   unsaved mark as they were.
//! - **Choosing a file** is a [`FileRequest`]: the desktop's dialog on a
//!   worker thread or the in-window dialog ([`super::dialogs`] says which),
//!   polled every frame; what happens with the chosen path is its
//!   [`FilePurpose`].
//! - **Failures** (a dialog that fails, a file that cannot be written or
//!   read) are a [`Notice`] naming the path and the reason, with a way on
//!   ("Choose another place…"), and a line in the status strip.

use std::path::{Path, PathBuf};
use std::time::Duration;

use egui::RichText;
use flowrise_core::project::Project;

use super::dialogs::{self, Availability, DesktopAnswer, DesktopDialog, DialogChoice};
use super::export;
use super::file_dialog::{DialogMode, DialogOutcome, DialogSpec, FileType, InWindowDialog};
use super::intents::Status;
use super::outline;
use super::recovery;
use super::theme;
use super::{FlowriseApp, files};

/// What waits behind the unsaved-changes question.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Pending {
    /// Close the window (window close button or Quit).
    Close,
    /// A new, empty project.
    New,
    /// The building-outline form.
    NewFromOutline,
    /// The Open dialog.
    Open,
    /// A file from the Recent list.
    OpenRecent(PathBuf),
    /// Work offered for recovery (index into the offer).
    Recover(usize),
}

/// What to do with the path a file dialog gives.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum FilePurpose {
    /// Open it as the document.
    Open,
    /// Save the document there; then go on with what waited for the save.
    Save {
        /// What the unsaved-changes question was for.
        then: Option<Pending>,
    },
    /// Write an export there.
    Export(export::Kind),
    /// Read it as the plan underlay of a level.
    Underlay(flowrise_core::project::LevelId),
    /// Read a room-load schedule from there, or write one.
    Schedule(ScheduleFile),
}

/// Which way a room-load schedule file goes.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ScheduleFile {
    /// Read it into the import window.
    Import,
    /// Write the emitters there.
    Export,
}

/// A file being chosen.
#[derive(Debug)]
pub struct FileRequest {
    purpose: FilePurpose,
    spec: DialogSpec,
    stage: Stage,
}

#[derive(Debug)]
enum Stage {
    /// The desktop's dialog is open.
    Desktop(Option<DesktopDialog>),
    /// flowrise's own dialog.
    InWindow(Box<InWindowDialog>),
}

/// A message that needs an answer: a failure, or a finished export.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Notice {
    /// Heading.
    pub title: String,
    /// What happened, with the path and the reason.
    pub text: String,
    /// A failure (shown in the error colour).
    pub error: bool,
    /// Offer to open this file with the default program.
    pub open: Option<PathBuf>,
    /// Offer to choose another file for this.
    pub retry: Option<FilePurpose>,
}

/// A file name from a project name: letters and digits kept, every run of
/// other characters one `-` ("Rowan Court — block" gives "Rowan-Court-block").
fn file_stem(name: &str) -> String {
    let mut s = String::new();
    for c in name.chars() {
        if c.is_alphanumeric() {
            s.push(c);
        } else if !s.is_empty() && !s.ends_with('-') {
            s.push('-');
        }
    }
    let s: String = s.trim_end_matches('-').chars().take(80).collect();
    if s.is_empty() { "project".to_owned() } else { s }
}

impl FlowriseApp {
    /// True when the window asked to close (Quit, or the close question
    /// answered); for tests, where no window closes.
    #[must_use]
    pub fn close_allowed(&self) -> bool {
        self.allow_close
    }

    /// Replace how the desktop's dialog is detected (tests give a known
    /// answer; the window starts a detection).
    pub fn set_dialog_probe(&mut self, probe: dialogs::Probe) {
        self.probe = probe;
    }

    /// The message waiting for an answer, if any.
    #[must_use]
    pub fn notice(&self) -> Option<&Notice> {
        self.notice.as_ref()
    }

    /// Go on with `p` now, or ask first when there are unsaved changes.
    pub(super) fn replace_or_ask(&mut self, p: Pending, ctx: &egui::Context) {
        if self.is_dirty() {
            self.pending = Some(p);
        } else {
            self.go_on(p, ctx);
        }
    }

    /// Carry out what waited behind the question (the user said Discard,
    /// or saved, or there was nothing to save).
    pub(super) fn go_on(&mut self, p: Pending, ctx: &egui::Context) {
        match p {
            Pending::Close => {
                self.allow_close = true;
                ctx.send_viewport_cmd(egui::ViewportCommand::Close);
            }
            Pending::New => self.replace_project(Project::new("Untitled project"), None),
            Pending::NewFromOutline => self.outline = Some(outline::OutlineForm::default()),
            Pending::Open => self.choose_file(FilePurpose::Open),
            Pending::OpenRecent(path) => self.open_path(path),
            Pending::Recover(i) => {
                self.recover(i);
                // One document at a time: the rest stay for the next start.
                self.orphans.clear();
            }
        }
    }

    /// The unsaved-changes question, while one is open.
    pub(super) fn unsaved_question(&mut self, ctx: &egui::Context) {
        let Some(pending) = self.pending.clone() else { return };
        let what = match &pending {
            Pending::Close => "before closing",
            Pending::New | Pending::NewFromOutline => "before starting a new project",
            Pending::Open | Pending::OpenRecent(_) => "before opening another project",
            Pending::Recover(_) => "before recovering other work",
        };
        match files::unsaved_prompt(ctx, &self.project.name, what) {
            Some(files::PromptChoice::Save) => {
                self.pending = None;
                self.save(false, Some(pending), ctx);
            }
            Some(files::PromptChoice::Discard) => {
                // Not marked saved here: the replacement does that, if it
                // happens.
                self.pending = None;
                self.go_on(pending, ctx);
            }
            Some(files::PromptChoice::Cancel) => self.pending = None,
            None => {}
        }
    }

    /// Save to the document's file, or ask where (`as_new`, or no file
    /// yet); then go on with `then`. A save that fails or is cancelled
    /// drops `then`: the document stays, unsaved.
    pub(super) fn save(&mut self, as_new: bool, then: Option<Pending>, ctx: &egui::Context) {
        if !as_new && self.path.is_some() && self.save_conflict.is_some() {
            self.conflict_prompt = true;
            self.conflict_then = then;
            return;
        }
        match (&self.path, as_new) {
            (Some(p), false) => {
                let p = p.clone();
                if self.write_project(&p)
                    && let Some(t) = then
                {
                    self.go_on(t, ctx);
                }
            }
            _ => self.choose_file(FilePurpose::Save { then }),
        }
    }

    /// Write the document to `path`; a failure is a notice. True when written.
    pub(super) fn write_project(&mut self, path: &Path) -> bool {
        self.underlay_paths_for(path);
        match self.project.save(path) {
            Ok(()) => {
                self.saved = std::sync::Arc::clone(&self.project);
                self.dirty_memo.set(None);
                self.remember(path);
                self.remember_dir(path);
                self.status = Some(Status::note(format!("saved {}", path.display())));
                self.disk_stamp = recovery::FileStamp::of(path);
                self.save_conflict = None;
                self.path = Some(recovery::absolute_path(path));
                true
            }
            Err(e) => {
                let text = format!("cannot save {}: {e}", path.display());
                self.status = Some(Status::error(&text));
                self.notice = Some(Notice {
                    title: "The project was not saved".to_owned(),
                    text: format!("{text}. Your work is still open, unsaved."),
                    error: true,
                    open: None,
                    retry: Some(FilePurpose::Save { then: None }),
                });
                false
            }
        }
    }

    /// Open a project file (a failure is a notice and a status line).
    pub fn open_path(&mut self, path: PathBuf) {
        match Project::load(&path) {
            Ok(p) => {
                let path = recovery::absolute_path(&path);
                self.remember(&path);
                self.remember_dir(&path);
                self.replace_project(p, Some(path.clone()));
                self.status = Some(Status::note(format!("opened {}", path.display())));
            }
            Err(e) => {
                let text = format!("cannot open {}: {e}", path.display());
                self.status = Some(Status::error(&text));
                self.notice = Some(Notice {
                    title: "The project was not opened".to_owned(),
                    text,
                    error: true,
                    open: None,
                    retry: Some(FilePurpose::Open),
                });
            }
        }
    }

    /// Export the parts list or the report: check it can be made, then ask
    /// where.
    pub(super) fn export(&mut self, kind: export::Kind) {
        let sol = self.solution().clone();
        if let Err(e) = export::text(kind, &self.project, &sol, flowrise_core::report::Studies::default()) {
            self.status = Some(Status::error(format!("export: {e}")));
            self.notice = Some(Notice {
                title: "Nothing to export yet".to_owned(),
                text: e,
                error: true,
                open: None,
                retry: None,
            });
            return;
        }
        self.choose_file(FilePurpose::Export(kind));
    }

    /// Write an export to `path`.
    fn write_export(&mut self, kind: export::Kind, path: &Path) {
        let sol = self.solution().clone();
        // The report carries the sweep and part-load results shown in the
        // drawer when they belong to this revision of the project.
        let sc = &self.drawer.scenarios;
        let rev = self.project.revision;
        let sweep = match &sc.sweep {
            Some((r, Ok(s))) if *r == rev => Some(s.clone()),
            _ => None,
        };
        let part_load = match &sc.part_load {
            Some((r, Ok(c))) if *r == rev => Some(c.clone()),
            _ => None,
        };
        let closed = flowrise_core::sweep::random_closed_set(&self.project, sc.closed_fraction, sc.seed).len();
        let underlays = (kind == export::Kind::Report).then(|| self.report_underlays());
        let studies = flowrise_core::report::Studies {
            sweep: sweep.as_ref(),
            part_load: part_load.as_ref().map(|c| (c.as_slice(), closed)),
            underlays: underlays.as_ref(),
        };
        match export::write(kind, &self.project, &sol, studies, path) {
            Ok(()) => {
                self.remember_dir(path);
                self.status = Some(Status::note(format!("wrote {}", path.display())));
                if kind == export::Kind::Report {
                    self.notice = Some(Notice {
                        title: "Report written".to_owned(),
                        text: format!("The design report is in {}.", path.display()),
                        error: false,
                        open: Some(path.to_path_buf()),
                        retry: None,
                    });
                }
            }
            Err(e) => {
                let text = format!("cannot write {}: {e}", path.display());
                self.status = Some(Status::error(&text));
                self.notice = Some(Notice {
                    title: format!("The {} was not written", kind.words()),
                    text,
                    error: true,
                    open: None,
                    retry: Some(FilePurpose::Export(kind)),
                });
            }
        }
    }

    /// The next dialog starts in the folder of a file read or written.
    fn remember_dir(&mut self, path: &Path) {
        if let Some(dir) = path.parent().filter(|d| !d.as_os_str().is_empty()) {
            self.prefs.last_dir = Some(dir.to_path_buf());
        }
    }

    /// What the dialog for `purpose` asks.
    fn dialog_spec(&self, purpose: &FilePurpose) -> DialogSpec {
        let start_dir = self
            .path
            .as_deref()
            .and_then(Path::parent)
            .map(Path::to_path_buf)
            .or_else(|| self.prefs.last_dir.clone())
            .or_else(|| std::env::current_dir().ok())
            .unwrap_or_default();
        let stem = file_stem(&self.project.name);
        match purpose {
            FilePurpose::Open => DialogSpec {
                mode: DialogMode::Open,
                title: "Open a flowrise project".to_owned(),
                file_type: FileType::PROJECT,
                file_name: None,
                start_dir,
            },
            FilePurpose::Save { .. } => DialogSpec {
                mode: DialogMode::Save,
                title: "Save the project".to_owned(),
                file_type: FileType::PROJECT,
                file_name: Some(format!("{stem}.ron")),
                start_dir,
            },
            FilePurpose::Underlay(_) => DialogSpec {
                mode: DialogMode::Open,
                title: "Choose a plan to trace over".to_owned(),
                file_type: FileType::PLAN,
                file_name: None,
                start_dir,
            },
            FilePurpose::Export(kind) => DialogSpec {
                mode: DialogMode::Save,
                title: format!("Export the {}", kind.words()),
                file_type: kind.file_type(),
                file_name: Some(format!("{stem}{}.{}", kind.suffix(), kind.file_type().extension)),
                start_dir,
            },
            FilePurpose::Schedule(which) => DialogSpec {
                mode: if *which == ScheduleFile::Import { DialogMode::Open } else { DialogMode::Save },
                title: if *which == ScheduleFile::Import {
                    "Read a room-load schedule"
                } else {
                    "Export the room loads"
                }
                .to_owned(),
                file_type: FileType::SCHEDULE,
                file_name: (*which == ScheduleFile::Export).then(|| format!("{stem}-room-loads.csv")),
                start_dir,
            },
        }
    }

    /// Ask for a file: the desktop's dialog when it is there and wanted,
    /// flowrise's own otherwise.
    pub(super) fn choose_file(&mut self, purpose: FilePurpose) {
        let spec = self.dialog_spec(&purpose);
        let stage = match self.prefs.file_dialog {
            DialogChoice::InWindow => Stage::InWindow(Box::new(InWindowDialog::new(
                spec.clone(),
                "flowrise's own file dialog, as set in the File menu.",
            ))),
            DialogChoice::Automatic => match self.probe.availability(Duration::from_secs(3)) {
                Availability::Desktop(_) => Stage::Desktop(Some(DesktopDialog::open(&spec))),
                Availability::None(why) => Stage::InWindow(Box::new(InWindowDialog::new(
                    spec.clone(),
                    format!("The desktop offers no file dialog here ({why}), so this is flowrise's own."),
                ))),
            },
        };
        self.file_request = Some(FileRequest { purpose, spec, stage });
    }

    /// Poll or draw the file request; act on the answer.
    pub(super) fn file_request_frame(&mut self, ctx: &egui::Context) {
        let Some(mut req) = self.file_request.take() else { return };
        let answer = match &mut req.stage {
            Stage::Desktop(job) => match job.take().map(DesktopDialog::poll) {
                Some(Ok(DesktopAnswer::Chosen(p))) => Some(DialogOutcome::Chosen(p)),
                Some(Ok(DesktopAnswer::Cancelled)) | None => Some(DialogOutcome::Cancelled),
                Some(Ok(DesktopAnswer::Failed(e))) => {
                    eprintln!("flowrise: the desktop's file dialog failed: {e}");
                    req.stage = Stage::InWindow(Box::new(InWindowDialog::new(
                        req.spec.clone(),
                        format!("flowrise's own file dialog: the desktop's dialog failed ({e})."),
                    )));
                    None
                }
                Some(Err(still_open)) => {
                    *job = Some(still_open);
                    if waiting_window(ctx, &req.spec.title) {
                        req.stage = Stage::InWindow(Box::new(InWindowDialog::new(
                            req.spec.clone(),
                            "flowrise's own file dialog, chosen while the desktop's was open (its answer is ignored).",
                        )));
                    }
                    ctx.request_repaint_after(Duration::from_millis(100));
                    None
                }
            },
            Stage::InWindow(d) => d.show(ctx),
        };
        match answer {
            None => self.file_request = Some(req),
            Some(DialogOutcome::Cancelled) => {}
            Some(DialogOutcome::Chosen(path)) => match req.purpose {
                FilePurpose::Open => self.open_path(path),
                FilePurpose::Save { then } => {
                    if self.write_project(&path)
                        && let Some(t) = then
                    {
                        self.go_on(t, ctx);
                    }
                }
                FilePurpose::Export(kind) => self.write_export(kind, &path),
                FilePurpose::Underlay(level) => self.underlay.start_import(level, path),
                FilePurpose::Schedule(which) => {
                    self.remember_dir(&path);
                    self.schedule_file(which, &path);
                }
            },
        }
    }

    /// True while a file is being chosen.
    #[must_use]
    pub fn choosing_file(&self) -> bool {
        self.file_request.is_some()
    }

    /// The answer of a report being opened, when it has come: a failure
    /// becomes a notice naming the file and the reason.
    fn poll_opening(&mut self, ctx: &egui::Context) {
        let Some((path, rx)) = self.opening.take() else { return };
        let failure = match rx.try_recv() {
            Ok(Ok(())) => {
                self.status = Some(Status::note(format!("opened {} with the default program", path.display())));
                return;
            }
            Ok(Err(e)) => e.to_string(),
            Err(std::sync::mpsc::TryRecvError::Empty) => {
                self.opening = Some((path, rx));
                ctx.request_repaint_after(Duration::from_millis(200));
                return;
            }
            Err(std::sync::mpsc::TryRecvError::Disconnected) => "the opening stopped without an answer".to_owned(),
        };
        let text = format!("cannot open {} with the default program: {failure}", path.display());
        self.status = Some(Status::error(&text));
        self.notice = Some(Notice {
            title: "The report was written but not opened".to_owned(),
            text: format!("{text}. Open the file from your file manager or browser."),
            error: true,
            open: None,
            retry: None,
        });
    }

    /// The notice window, while there is one.
    pub(super) fn notice_window(&mut self, ctx: &egui::Context) {
        self.poll_opening(ctx);
        let Some(n) = self.notice.clone() else { return };
        if self.file_request.is_some() {
            return;
        }
        enum Choice {
            Close,
            Open(PathBuf),
            Retry(FilePurpose),
        }
        let mut choice = None;
        egui::Modal::new(egui::Id::unique("flowrise_notice")).show(ctx, |ui| {
            ui.set_max_width(560.0);
            ui.heading(&n.title);
            let text = RichText::new(&n.text);
            ui.label(if n.error { text.color(theme::ERROR) } else { text });
            ui.add_space(6.0);
            ui.horizontal(|ui| {
                if let Some(p) = &n.open
                    && ui.button("Open in browser").on_hover_text("Open the report with the default program").clicked()
                {
                    choice = Some(Choice::Open(p.clone()));
                }
                if let Some(r) = &n.retry
                    && ui.button("Choose another place…").clicked()
                {
                    choice = Some(Choice::Retry(r.clone()));
                }
                if ui.button("Close").clicked() {
                    choice = Some(Choice::Close);
                }
            });
        });
        match choice {
            Some(Choice::Close) => self.notice = None,
            Some(Choice::Retry(r)) => {
                self.notice = None;
                self.choose_file(r);
            }
            Some(Choice::Open(p)) => {
                // The opener waits for the program's answer (a desktop
                // without a browser fails only then), so on a worker thread.
                self.notice = None;
                self.status = Some(Status::note(format!("opening {} with the default program…", p.display())));
                let (tx, rx) = std::sync::mpsc::channel();
                let (opener, path) = (self.opener, p.clone());
                std::thread::spawn(move || {
                    let _ = tx.send(opener(&path));
                });
                self.opening = Some((p, rx));
                ctx.request_repaint();
            }
            None => {}
        }
    }
}

/// The window shown while the desktop's dialog is open; true when the
/// user asks for the in-window dialog instead.
fn waiting_window(ctx: &egui::Context, title: &str) -> bool {
    let mut switch = false;
    egui::Modal::new(egui::Id::unique("flowrise_waiting_dialog")).show(ctx, |ui| {
        ui.heading(title);
        ui.label("The desktop's file dialog is open (it may be behind this window).");
        if ui
            .button("Use flowrise's own dialog instead")
            .on_hover_text("If the desktop's dialog does not appear, choose the file inside this window")
            .clicked()
        {
            switch = true;
        }
    });
    switch
}

/// How a file is opened with the default program; returns its failure.
pub type Opener = fn(&std::path::Path) -> std::io::Result<()>;

/// The desktop's default program for the file (the `open` crate, which
/// waits for the launcher's exit status, so a desktop without a browser is
/// reported instead of passed over).
///
/// # Errors
/// The launcher could not be started or reported a failure.
pub fn open_with_default_program(path: &std::path::Path) -> std::io::Result<()> {
    open::that(path)
}

/// The question about saving over a changed file.
impl FlowriseApp {
    /// The question before saving recovered work over a file that changed
    /// or moved since it was autosaved.
    pub(super) fn conflict_question(&mut self, ctx: &egui::Context) {
        let Some(c) = self.save_conflict.clone().filter(|_| self.conflict_prompt) else { return };
        let mut choice = None;
        egui::Modal::new(egui::Id::unique("save_conflict")).show(ctx, |ui| {
            ui.set_max_width(560.0);
            ui.heading("Save over a changed file?");
            ui.label(format!("The recovered work belongs to {}, which {}.", c.path.display(), c.reason));
            ui.label("Saving there replaces what is in that file now.");
            ui.horizontal(|ui| {
                if ui.button("Save As…").clicked() {
                    choice = Some(0);
                }
                if ui.button("Overwrite").clicked() {
                    choice = Some(1);
                }
                if ui.button("Cancel").clicked() {
                    choice = Some(2);
                }
            });
        });
        match choice {
            Some(0) => {
                self.conflict_prompt = false;
                let then = self.conflict_then.take();
                self.save(true, then, ctx);
            }
            Some(1) => {
                self.conflict_prompt = false;
                self.save_conflict = None;
                let then = self.conflict_then.take();
                self.save(false, then, ctx);
            }
            Some(_) => {
                self.conflict_prompt = false;
                self.conflict_then = None;
            }
            None => {}
        }
    }
}
