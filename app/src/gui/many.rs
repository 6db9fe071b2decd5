//! Editing many items at once from the window: select all, copy and paste
//! (within a level and onto another one), repeat a level's network on other
//! levels, and the room-load schedule import and export. The model work is
//! in `flowrise_core::project::{repeat, schedule}`; each change is one
//! all-or-nothing edit, so one undo step.
//!
//! The clipboard holds the copied nodes inside the window; the system
//! clipboard gets a line naming them, so that Ctrl+V (which reaches the
//! window as a paste of that text) pastes them. A table pasted onto the
//! canvas from a spreadsheet opens the schedule import with it.

use std::collections::BTreeSet;
use std::path::Path;

use egui::{Event, RichText};
use flowrise_core::project::repeat::{self, Fragment};
use flowrise_core::project::{Edit, EditOutcome, LevelId};

use super::canvas::select;
use super::intents::{Selection, Status};
use super::schedule::{self, ScheduleDialog};
use super::{FlowriseApp, theme};

/// The first words of the text the window puts on the system clipboard.
pub const CLIPBOARD_MARK: &str = "flowrise selection:";

/// Gap between a copy pasted on its own level and the original, m.
pub const PASTE_GAP_M: f64 = 2.0;

/// An action on many items (menus, keys, tests).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ManyAction {
    /// Select every node of the level shown.
    SelectAll,
    /// Copy the selected nodes and the runs between them.
    Copy,
    /// Paste the copy onto the level shown.
    Paste,
    /// Delete the selected nodes and their runs.
    Delete,
    /// Open the repeat-level window.
    RepeatLevel,
    /// Open the room-load schedule import.
    ImportSchedule,
    /// Write the emitters as a room-load schedule (CSV).
    ExportSchedule,
}

impl ManyAction {
    /// Every action, in menu order.
    pub const ALL: [Self; 7] = [
        Self::SelectAll,
        Self::Copy,
        Self::Paste,
        Self::Delete,
        Self::RepeatLevel,
        Self::ImportSchedule,
        Self::ExportSchedule,
    ];

    /// Words on the menu entry (also the accessible label).
    #[must_use]
    pub fn label(self) -> &'static str {
        match self {
            Self::SelectAll => "Select all on this level",
            Self::Copy => "Copy",
            Self::Paste => "Paste",
            Self::Delete => "Delete selection",
            Self::RepeatLevel => "Repeat level on other levels…",
            Self::ImportSchedule => "Import room loads…",
            Self::ExportSchedule => "Export room loads (CSV)…",
        }
    }

    /// Keyboard shortcut.
    #[must_use]
    pub fn shortcut(self) -> Option<egui::KeyboardShortcut> {
        use egui::{Key, KeyboardShortcut, Modifiers};
        let cmd = |k| Some(KeyboardShortcut::new(Modifiers::COMMAND, k));
        match self {
            Self::SelectAll => cmd(Key::A),
            Self::Copy => cmd(Key::C),
            Self::Paste => cmd(Key::V),
            Self::Delete | Self::RepeatLevel | Self::ImportSchedule | Self::ExportSchedule => None,
        }
    }

    /// What it does.
    #[must_use]
    pub fn tooltip(self) -> &'static str {
        match self {
            Self::SelectAll => "Select every node of the level shown (then move, copy or delete them together)",
            Self::Copy => "Copy the selected nodes and the runs between them",
            Self::Paste => {
                "Paste the copy on the level shown: beside the original on its own level, at the same positions on \
                 another level"
            }
            Self::Delete => "Delete the selected nodes and their runs (Delete key)",
            Self::RepeatLevel => {
                "Copy this level's network onto other levels (new ids; joined to the risers where the floors line up)"
            }
            Self::ImportSchedule => {
                "Update and create emitters from a room-load schedule: a CSV file or cells pasted from a spreadsheet"
            }
            Self::ExportSchedule => "Write every emitter's room, level, load and temperature as a CSV schedule",
        }
    }
}

/// The repeat-level form.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct RepeatForm {
    /// Level repeated.
    pub from: LevelId,
    /// Levels it is copied onto.
    pub to: BTreeSet<LevelId>,
    /// Remove what the target levels hold besides their risers first.
    pub replace: bool,
}

/// Transient state of these features.
#[derive(Debug, Default)]
pub struct ManyState {
    /// The copy: the level it came from and the nodes and runs.
    clipboard: Option<(LevelId, Fragment)>,
    /// The repeat-level window, when open.
    pub repeat: Option<RepeatForm>,
    /// The schedule window, when open.
    pub schedule: Option<ScheduleDialog>,
}

impl FlowriseApp {
    /// Carry out an action on many items.
    pub fn run_many(&mut self, a: ManyAction, ctx: &egui::Context) {
        match a {
            ManyAction::SelectAll => {
                let level = self.canvas.level;
                self.canvas.group = self.project.nodes().filter(|n| n.level == level).map(|n| n.id).collect();
                self.selection = select::selection_of(&self.canvas.group);
            }
            ManyAction::Copy => self.copy_selection(ctx),
            ManyAction::Paste => self.paste(),
            ManyAction::Delete => {
                let group = self.picked();
                if let Some(edit) = select::delete_edit(&self.project, &group) {
                    self.apply_step(edit);
                    self.canvas.group.clear();
                }
            }
            ManyAction::RepeatLevel => {
                self.many.repeat = Some(RepeatForm { from: self.canvas.level, to: BTreeSet::new(), replace: false });
            }
            ManyAction::ImportSchedule => {
                self.many.schedule = Some(ScheduleDialog::new(self.prefs.schedule_columns.clone()));
            }
            ManyAction::ExportSchedule => self.choose_file(super::FilePurpose::Schedule(super::ScheduleFile::Export)),
        }
    }

    /// The selected nodes: the group, else the single selected node.
    fn picked(&self) -> BTreeSet<flowrise_core::project::NodeId> {
        if !self.canvas.group.is_empty() {
            return self.canvas.group.clone();
        }
        match self.selection {
            Selection::Node(id) => BTreeSet::from([id]),
            _ => BTreeSet::new(),
        }
    }

    /// Apply `edit` as one undo step; a refusal goes to the status line.
    pub(super) fn apply_step(&mut self, edit: Edit) -> Option<EditOutcome> {
        let before = std::sync::Arc::clone(&self.project);
        match std::sync::Arc::make_mut(&mut self.project).apply(edit) {
            Ok(o) => {
                self.history.push(before);
                Some(o)
            }
            Err(e) => {
                self.status = Some(Status::error(e.to_string()));
                None
            }
        }
    }

    fn copy_selection(&mut self, ctx: &egui::Context) {
        let ids: Vec<_> = self.picked().into_iter().collect();
        let frag = Fragment::copy(&self.project, &ids);
        if frag.is_empty() {
            self.status = Some(Status::error("nothing selected to copy — click a node, or drag a box around several"));
            return;
        }
        let words = format!("{} nodes and {} runs", frag.nodes.len(), frag.runs.len());
        ctx.copy_text(format!("{CLIPBOARD_MARK} {words}"));
        self.status = Some(Status::note(format!("copied {words} — paste with Ctrl+V on this or another level")));
        self.many.clipboard = Some((self.canvas.level, frag));
    }

    fn paste(&mut self) {
        let Some((from, frag)) = &self.many.clipboard else {
            self.status = Some(Status::error("nothing copied yet — select nodes and copy them first"));
            return;
        };
        let level = self.canvas.level;
        let (dx_m, same) = if *from == level {
            let (lo, hi) = bounds(frag);
            ((hi - lo).max(0.0) + PASTE_GAP_M, true)
        } else {
            (0.0, false)
        };
        let p = match repeat::paste(&self.project, frag, level, dx_m, 0.0) {
            Ok(p) => p,
            Err(e) => {
                self.status = Some(Status::error(e.to_string()));
                return;
            }
        };
        let skipped = p.skipped_sources;
        if self.apply_step(p.edit).is_some() {
            self.canvas.group = p.new_nodes.iter().copied().collect();
            self.selection = select::selection_of(&self.canvas.group);
            let place = if same { "beside the original" } else { "at the same positions" };
            let note = if skipped > 0 { " (the heat source is not copied: a network has one)" } else { "" };
            self.status = Some(Status::note(format!(
                "pasted {} nodes {place}{note} — they stay selected: drag them where they go",
                p.new_nodes.len()
            )));
        }
    }

    /// The copy and paste events of the window (Ctrl+C, Ctrl+X, Ctrl+V reach
    /// egui as events, not keys), while no text field has the keyboard.
    pub(super) fn clipboard_events(&mut self, ctx: &egui::Context) {
        if ctx.egui_wants_keyboard_input() {
            return;
        }
        let events: Vec<Event> = ctx.input(|i| {
            i.events.iter().filter(|e| matches!(e, Event::Copy | Event::Cut | Event::Paste(_))).cloned().collect()
        });
        for e in events {
            match e {
                Event::Copy => self.run_many(ManyAction::Copy, ctx),
                Event::Cut => {
                    self.run_many(ManyAction::Copy, ctx);
                    self.run_many(ManyAction::Delete, ctx);
                }
                Event::Paste(text) if text.starts_with(CLIPBOARD_MARK) => self.paste(),
                Event::Paste(text) if text.contains('\t') && text.trim().contains('\n') => {
                    let mut d = ScheduleDialog::new(self.prefs.schedule_columns.clone());
                    d.pasted.clone_from(&text);
                    d.load(&text, "pasted table");
                    self.many.schedule = Some(d);
                }
                _ => {}
            }
        }
    }

    /// The windows of these features.
    pub(super) fn many_windows(&mut self, ctx: &egui::Context) {
        let revision = self.project.revision;
        self.canvas.group.retain(|&id| self.project.node(id).is_some());
        self.repeat_window(ctx);
        self.schedule_window(ctx);
        if self.project.revision != revision {
            ctx.request_repaint();
        }
    }

    fn schedule_window(&mut self, ctx: &egui::Context) {
        let Some(mut d) = self.many.schedule.take() else { return };
        let mut open = true;
        let mut outcome = schedule::Outcome::Open;
        egui::Window::new("Import room loads").open(&mut open).default_width(560.0).show(ctx, |ui| {
            outcome = schedule::show(ui, &mut d, &self.project);
        });
        match outcome {
            schedule::Outcome::Open if open => self.many.schedule = Some(d),
            schedule::Outcome::Open | schedule::Outcome::Cancelled => {}
            schedule::Outcome::ChooseFile => {
                self.many.schedule = Some(d);
                self.choose_file(super::FilePurpose::Schedule(super::ScheduleFile::Import));
            }
            schedule::Outcome::Apply(edit, words) => {
                if self.apply_step(*edit).is_some() {
                    self.prefs.schedule_columns = d.map.clone();
                    self.status = Some(Status::note(words));
                } else {
                    self.many.schedule = Some(d);
                }
            }
        }
    }

    /// A schedule file was chosen: read it into the import window, or write
    /// the export there.
    pub(super) fn schedule_file(&mut self, which: super::ScheduleFile, path: &Path) {
        match which {
            super::ScheduleFile::Import => {
                let read = std::fs::metadata(path).map_err(|e| e.to_string()).and_then(|m| {
                    if m.len() > schedule::MAX_FILE_BYTES {
                        Err(format!(
                            "it is {} MB; a schedule may have {} MB",
                            m.len() >> 20,
                            schedule::MAX_FILE_BYTES >> 20
                        ))
                    } else {
                        std::fs::read(path).map_err(|e| e.to_string())
                    }
                });
                let d =
                    self.many.schedule.get_or_insert_with(|| ScheduleDialog::new(self.prefs.schedule_columns.clone()));
                match read {
                    Ok(bytes) => d.load(&String::from_utf8_lossy(&bytes), path.display().to_string()),
                    Err(e) => self.status = Some(Status::error(format!("cannot read {}: {e}", path.display()))),
                }
            }
            super::ScheduleFile::Export => {
                let written = flowrise_core::project::schedule::schedule_csv(&self.project).and_then(|text| {
                    flowrise_core::project::file::write_atomic(path, text.as_bytes()).map_err(|e| e.to_string())
                });
                self.status = Some(match written {
                    Ok(()) => Status::note(format!("wrote the room loads to {}", path.display())),
                    Err(e) => Status::error(format!("cannot write {}: {e}", path.display())),
                });
            }
        }
    }

    fn repeat_window(&mut self, ctx: &egui::Context) {
        let Some(mut form) = self.many.repeat.take() else { return };
        let mut open = true;
        let mut go = false;
        let mut cancel = false;
        let preview =
            repeat::repeat_level(&self.project, form.from, &form.to.iter().copied().collect::<Vec<_>>(), form.replace);
        egui::Window::new("Repeat level").open(&mut open).default_width(420.0).show(ctx, |ui| {
            let from_name = self.project.level(form.from).map_or_else(String::new, |l| l.name.clone());
            let label = ui.label("Repeat the network of").id;
            egui::ComboBox::from_id_salt("repeat_from")
                .selected_text(from_name)
                .show_ui(ui, |ui| {
                    for l in &self.project.levels {
                        ui.selectable_value(&mut form.from, l.id, &l.name);
                    }
                })
                .response
                .labelled_by(label);
            ui.label("onto:");
            for l in &self.project.levels {
                if l.id == form.from {
                    continue;
                }
                let mut on = form.to.contains(&l.id);
                if ui.checkbox(&mut on, format!("{} ({:+.2} m)", l.name, l.elevation_m)).changed() {
                    if on {
                        form.to.insert(l.id);
                    } else {
                        form.to.remove(&l.id);
                    }
                }
            }
            form.to.remove(&form.from);
            ui.checkbox(&mut form.replace, "Replace what is there (keeps each level's risers)");
            match &preview {
                _ if form.to.is_empty() => {
                    ui.label("Tick the levels to copy onto.");
                }
                Ok((_, rep)) => {
                    ui.label(format!(
                        "{} nodes and {} runs in all; {} joined to a riser, {} rising points without one{}",
                        rep.nodes,
                        rep.runs,
                        rep.joined.len(),
                        rep.unjoined.len(),
                        if rep.removed > 0 { format!("; {} items replaced", rep.removed) } else { String::new() }
                    ));
                }
                Err(e) => {
                    ui.label(RichText::new(e.to_string()).color(theme::ERROR));
                }
            }
            ui.horizontal(|ui| {
                let ok = preview.is_ok() && !form.to.is_empty();
                if ui.add_enabled(ok, egui::Button::new("Repeat")).on_hover_text("One undo step").clicked() {
                    go = true;
                }
                if ui.button("Cancel").clicked() {
                    cancel = true;
                }
            });
        });
        open &= !cancel;
        if go && let Ok((edit, rep)) = preview {
            if self.apply_step(edit).is_some() {
                let loose = if rep.unjoined.is_empty() {
                    String::new()
                } else {
                    format!(" — {} rising points had no riser to join: draw those risers", rep.unjoined.len())
                };
                self.status = Some(Status::note(format!(
                    "level repeated on {} levels: {} nodes, {} runs, {} joined to risers{loose}",
                    form.to.len(),
                    rep.nodes,
                    rep.runs,
                    rep.joined.len()
                )));
            }
            return;
        }
        if open {
            self.many.repeat = Some(form);
        }
    }
}

/// Left and right x of the copied nodes and bends, m.
fn bounds(frag: &Fragment) -> (f64, f64) {
    let xs =
        frag.nodes.iter().map(|n| n.pos.x_m).chain(frag.runs.iter().flat_map(|r| r.vertices.iter().map(|v| v.x_m)));
    xs.fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), x| (lo.min(x), hi.max(x)))
}
