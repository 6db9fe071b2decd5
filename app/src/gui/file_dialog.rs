//! flowrise's own file dialog, drawn inside the window.
//!
//! Used when the desktop offers no file dialog (no portal, no D-Bus, a
//! minimal or headless desktop), when the desktop's dialog fails, or when
//! the preference asks for it (see [`super::dialogs`] for how the choice is
//! made). It has what a file dialog needs and nothing more: a path field
//! with completion (Tab, or a click on a suggestion), the folder listing
//! with parent and child navigation, the filter for the file type, and a
//! question before an existing file is replaced. Every problem (a folder
//! that cannot be read, a missing folder, a name that is a folder) is a
//! message inside the dialog naming the path and the reason.

use std::path::{Path, PathBuf};

use egui::{Key, RichText, ScrollArea, Ui};

use super::theme;

/// Open an existing file, or choose where to write one.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum DialogMode {
    /// Pick an existing file.
    Open,
    /// Choose a file to write (asks before replacing one).
    Save,
}

/// The file type a dialog offers.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct FileType {
    /// Name shown to people ("flowrise project").
    pub name: &'static str,
    /// Extension without the dot ("ron").
    pub extension: &'static str,
    /// Further extensions of the same type ("jpg" beside "png").
    pub more: &'static [&'static str],
}

impl FileType {
    /// A flowrise project file.
    pub const PROJECT: Self = Self { name: "flowrise project", extension: "ron", more: &[] };
    /// A parts list.
    pub const CSV: Self = Self { name: "parts list (CSV)", extension: "csv", more: &[] };
    /// A design report.
    pub const HTML: Self = Self { name: "design report (HTML)", extension: "html", more: &[] };
    /// A plan to trace over (image, PDF or DXF drawing).
    pub const PLAN: Self = Self { name: "plan", extension: "png", more: &["jpg", "jpeg", "pdf", "dxf"] };

    /// Every extension of the type.
    pub fn extensions(self) -> impl Iterator<Item = &'static str> {
        std::iter::once(self.extension).chain(self.more.iter().copied())
    }
    /// A room-load schedule.
    pub const SCHEDULE: Self = Self { name: "room-load schedule (CSV)", extension: "csv", more: &[] };

    /// "flowrise project (*.ron)".
    #[must_use]
    pub fn filter_text(self) -> String {
        let globs: Vec<String> = self.extensions().map(|e| format!("*.{e}")).collect();
        format!("{} ({})", self.name, globs.join(" "))
    }

    /// True when `name` carries this type's extension.
    #[must_use]
    pub fn matches(self, name: &str) -> bool {
        Path::new(name).extension().is_some_and(|e| self.extensions().any(|x| e.eq_ignore_ascii_case(x)))
    }
}

/// What a dialog asks for: the same description serves the desktop's
/// dialog and the in-window one.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct DialogSpec {
    /// Open or save.
    pub mode: DialogMode,
    /// Window title ("Save the project").
    pub title: String,
    /// File type offered.
    pub file_type: FileType,
    /// File name proposed when saving.
    pub file_name: Option<String>,
    /// Folder to start in.
    pub start_dir: PathBuf,
}

impl DialogSpec {
    /// Add the type's extension to a chosen save path that has none.
    #[must_use]
    pub fn with_extension(&self, path: PathBuf) -> PathBuf {
        if self.mode == DialogMode::Save && path.extension().is_none() {
            path.with_extension(self.file_type.extension)
        } else {
            path
        }
    }
}

/// One row of the folder listing.
#[derive(Debug, Clone, PartialEq, Eq)]
struct Entry {
    name: String,
    is_dir: bool,
}

/// How the dialog ended.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum DialogOutcome {
    /// The file chosen (for Save: confirmed when it existed).
    Chosen(PathBuf),
    /// Closed without a choice.
    Cancelled,
}

/// Most suggestions shown under the path field.
const MAX_SUGGESTIONS: usize = 8;

/// The in-window dialog's state (transient).
#[derive(Debug, Clone)]
pub struct InWindowDialog {
    spec: DialogSpec,
    /// Why the in-window dialog is shown (no desktop dialog, or the
    /// preference), in one line.
    pub why: String,
    dir: PathBuf,
    /// The path field: a name in [`Self::dir`], or a path (absolute, `~/…`
    /// or relative to the folder).
    path_text: String,
    entries: Result<Vec<Entry>, String>,
    all_files: bool,
    show_hidden: bool,
    /// A problem with the last attempt, shown in the dialog.
    message: Option<String>,
    /// Waiting for "Replace?" about this file.
    confirm_replace: Option<PathBuf>,
    /// Focus the field on the next frame.
    focus_field: bool,
    /// Put the field's selection here on the next frame (characters):
    /// the proposed name selected, so typing replaces it; the cursor at
    /// the end after a completion.
    select: Option<(usize, usize)>,
}

fn home_dir() -> Option<PathBuf> {
    std::env::var_os("HOME").filter(|h| !h.is_empty()).map(PathBuf::from)
}

/// `~/x` expanded; a relative path joined to `dir`.
fn resolve(dir: &Path, text: &str) -> PathBuf {
    let text = text.trim();
    if text == "~" {
        return home_dir().unwrap_or_else(|| dir.to_path_buf());
    }
    if let Some(rest) = text.strip_prefix("~/")
        && let Some(home) = home_dir()
    {
        return home.join(rest);
    }
    let p = Path::new(text);
    if p.is_absolute() { p.to_path_buf() } else { dir.join(p) }
}

/// The listing of `dir`: folders first, then files, each sorted by name
/// (case-insensitive).
fn list(dir: &Path) -> Result<Vec<Entry>, String> {
    let rd = std::fs::read_dir(dir).map_err(|e| format!("cannot read the folder {}: {e}", dir.display()))?;
    let mut out: Vec<Entry> = rd
        .flatten()
        .map(|e| {
            let name = e.file_name().to_string_lossy().into_owned();
            // Follow links: a link to a folder is browsed like a folder.
            let is_dir = std::fs::metadata(e.path()).is_ok_and(|m| m.is_dir());
            Entry { name, is_dir }
        })
        .collect();
    out.sort_by(|a, b| b.is_dir.cmp(&a.is_dir).then_with(|| a.name.to_lowercase().cmp(&b.name.to_lowercase())));
    Ok(out)
}

/// The longest common prefix of some names (by characters).
fn common_prefix<'a>(names: impl Iterator<Item = &'a str>) -> String {
    let mut prefix: Option<Vec<char>> = None;
    for n in names {
        let chars: Vec<char> = n.chars().collect();
        prefix = Some(match prefix {
            None => chars,
            Some(p) => p.iter().zip(&chars).take_while(|(a, b)| a == b).map(|(a, _)| *a).collect(),
        });
    }
    prefix.map(|p| p.into_iter().collect()).unwrap_or_default()
}

impl InWindowDialog {
    /// A dialog for `spec`; `why` says why this dialog and not the desktop's.
    #[must_use]
    pub fn new(spec: DialogSpec, why: impl Into<String>) -> Self {
        let dir = if spec.start_dir.is_dir() {
            spec.start_dir.clone()
        } else {
            std::env::current_dir().ok().or_else(home_dir).unwrap_or_else(|| PathBuf::from("/"))
        };
        let path_text = spec.file_name.clone().unwrap_or_default();
        // The proposed name's stem selected (typing replaces it, the
        // extension stays), as desktop dialogs do.
        let stem_chars = Path::new(&path_text).file_stem().map_or(0, |s| s.to_string_lossy().chars().count());
        let mut d = Self {
            spec,
            why: why.into(),
            entries: Ok(Vec::new()),
            dir: dir.clone(),
            path_text,
            all_files: false,
            show_hidden: false,
            message: None,
            confirm_replace: None,
            focus_field: true,
            select: Some((0, stem_chars)),
        };
        d.enter(dir);
        d
    }

    /// What the dialog asks for.
    #[must_use]
    pub fn spec(&self) -> &DialogSpec {
        &self.spec
    }

    /// The folder shown.
    #[must_use]
    pub fn dir(&self) -> &Path {
        &self.dir
    }

    fn enter(&mut self, dir: PathBuf) {
        let dir = std::fs::canonicalize(&dir).unwrap_or(dir);
        self.entries = list(&dir);
        self.dir = dir;
        self.message = None;
        self.confirm_replace = None;
    }

    fn visible(&self, e: &Entry) -> bool {
        (self.show_hidden || !e.name.starts_with('.'))
            && (e.is_dir || self.all_files || self.spec.file_type.matches(&e.name))
    }

    /// Names in the folder of the typed path that start with its last part
    /// (folders end in `/`).
    fn suggestions(&self) -> Vec<String> {
        let text = self.path_text.trim();
        if text.is_empty() {
            return Vec::new();
        }
        let (folder_part, stem) = match text.rfind('/') {
            Some(i) => (&text[..=i], &text[i + 1..]),
            None => ("", text),
        };
        let folder = if folder_part.is_empty() { self.dir.clone() } else { resolve(&self.dir, folder_part) };
        let entries = if folder == self.dir { self.entries.clone() } else { list(&folder) };
        let Ok(entries) = entries else { return Vec::new() };
        let lower = stem.to_lowercase();
        entries
            .iter()
            .filter(|e| self.visible(e) || (!stem.is_empty() && stem.starts_with('.') && e.name.starts_with('.')))
            .filter(|e| e.name.to_lowercase().starts_with(&lower) && e.name != stem)
            .map(|e| format!("{folder_part}{}{}", e.name, if e.is_dir { "/" } else { "" }))
            .take(MAX_SUGGESTIONS * 4)
            .collect()
    }

    /// Tab: complete the path field to what all suggestions share.
    fn complete(&mut self) {
        let s = self.suggestions();
        let common = common_prefix(s.iter().map(String::as_str));
        if common.chars().count() > self.path_text.trim().chars().count() {
            let n = common.chars().count();
            self.path_text = common;
            self.focus_field = true;
            self.select = Some((n, n));
        }
    }

    /// The dialog's answer to the path field as it stands: a folder to go
    /// into, a file chosen, a question, or a message.
    fn accept(&mut self) -> Option<DialogOutcome> {
        let text = self.path_text.trim().to_owned();
        if text.is_empty() {
            self.message = Some(match self.spec.mode {
                DialogMode::Open => "choose a file in the list or type its name".to_owned(),
                DialogMode::Save => "type a file name".to_owned(),
            });
            return None;
        }
        let target = resolve(&self.dir, &text);
        if target.is_dir() {
            self.path_text.clear();
            self.enter(target);
            return None;
        }
        match self.spec.mode {
            DialogMode::Open => {
                if target.is_file() {
                    Some(DialogOutcome::Chosen(target))
                } else {
                    self.message = Some(format!("there is no file {}", target.display()));
                    None
                }
            }
            DialogMode::Save => {
                if text.ends_with('/') {
                    self.message = Some(format!("the folder {} does not exist", target.display()));
                    return None;
                }
                let target = self.spec.with_extension(target);
                let parent = target.parent().map(Path::to_path_buf).unwrap_or_default();
                if !parent.is_dir() {
                    self.message = Some(format!(
                        "the folder {} does not exist — create it first or choose another",
                        parent.display()
                    ));
                    return None;
                }
                if target.is_dir() {
                    self.message = Some(format!("{} is a folder — type a file name", target.display()));
                    return None;
                }
                if target.exists() {
                    self.confirm_replace = Some(target);
                    return None;
                }
                Some(DialogOutcome::Chosen(target))
            }
        }
    }

    /// Draw the dialog; returns how it ended, once it has.
    pub fn show(&mut self, ctx: &egui::Context) -> Option<DialogOutcome> {
        let mut outcome = None;
        let screen = ctx.content_rect();
        let width = (screen.width() - 60.0).clamp(300.0, 680.0);
        let list_h = (screen.height() - 330.0).clamp(90.0, 340.0);
        egui::Modal::new(egui::Id::unique("flowrise_file_dialog")).show(ctx, |ui| {
            ui.set_width(width);
            ui.heading(&self.spec.title);
            ui.label(RichText::new(&self.why).small().weak());
            ui.add_space(4.0);
            outcome = self.body(ui, list_h);
        });
        outcome
    }

    fn body(&mut self, ui: &mut Ui, list_h: f32) -> Option<DialogOutcome> {
        let mut outcome = None;
        ui.horizontal(|ui| {
            if ui.button("Parent folder").on_hover_text("Go up one folder").clicked()
                && let Some(up) = self.dir.parent()
            {
                let up = up.to_path_buf();
                self.enter(up);
            }
            if let Some(home) = home_dir()
                && ui.button("Home").on_hover_text(home.display().to_string()).clicked()
            {
                self.enter(home);
            }
            ui.add(egui::Label::new(RichText::new(self.dir.display().to_string()).monospace()).truncate())
                .on_hover_text(self.dir.display().to_string());
        });
        let mut chosen_name: Option<(String, bool)> = None;
        let mut go_into: Option<PathBuf> = None;
        egui::Frame::group(ui.style()).show(ui, |ui| {
            ScrollArea::vertical().id_salt("file_dialog_listing").max_height(list_h).auto_shrink([false, true]).show(
                ui,
                |ui| {
                    ui.set_min_height(list_h.min(120.0));
                    match &self.entries {
                        Err(e) => {
                            ui.label(RichText::new(e).color(theme::ERROR));
                        }
                        Ok(entries) => {
                            let shown: Vec<&Entry> = entries.iter().filter(|e| self.visible(e)).collect();
                            if shown.is_empty() {
                                ui.label(RichText::new("no folders or matching files here").weak());
                            }
                            for e in shown {
                                let text = if e.is_dir { format!("{}/", e.name) } else { e.name.clone() };
                                let selected = !e.is_dir && self.path_text.trim() == e.name;
                                let r = ui.add(egui::Button::selectable(selected, text).truncate());
                                if e.is_dir && r.clicked() {
                                    go_into = Some(self.dir.join(&e.name));
                                } else if r.double_clicked() {
                                    chosen_name = Some((e.name.clone(), true));
                                } else if r.clicked() {
                                    chosen_name = Some((e.name.clone(), false));
                                }
                            }
                        }
                    }
                },
            );
        });
        if let Some(dir) = go_into {
            self.enter(dir);
        }
        if let Some((name, accept)) = chosen_name {
            self.path_text = name;
            self.message = None;
            self.confirm_replace = None;
            if accept {
                outcome = self.accept();
            }
        }
        // The path field, with completion.
        let field_label = match self.spec.mode {
            DialogMode::Open => "File name or path",
            DialogMode::Save => "Save as (file name or path)",
        };
        let mut enter = false;
        ui.horizontal(|ui| {
            let label = ui.label(field_label);
            let edit = egui::TextEdit::singleline(&mut self.path_text)
                .lock_focus(true)
                .desired_width(ui.available_width())
                .hint_text("name, or a path such as ~/projects/plant.ron");
            let mut output = edit.show(ui);
            let r = output.response.response.clone().labelled_by(label.id);
            if self.focus_field {
                r.request_focus();
                self.focus_field = false;
            }
            if let Some((a, b)) = self.select.take() {
                let range = egui::text::CCursorRange::two(egui::text::CCursor::new(a), egui::text::CCursor::new(b));
                output.state.cursor.set_char_range(Some(range));
                output.state.store(ui.ctx(), r.id);
            }
            if r.changed() {
                self.message = None;
                self.confirm_replace = None;
            }
            if r.has_focus() && ui.input_mut(|i| i.consume_key(egui::Modifiers::NONE, Key::Tab)) {
                self.complete();
            }
            if r.lost_focus() && ui.input(|i| i.key_pressed(Key::Enter)) {
                enter = true;
            }
        });
        let suggestions = self.suggestions();
        if !suggestions.is_empty() {
            ui.horizontal_wrapped(|ui| {
                ui.label(RichText::new("Tab completes:").small().weak());
                for s in suggestions.iter().take(MAX_SUGGESTIONS) {
                    if ui.small_button(s).clicked() {
                        self.path_text.clone_from(s);
                        self.focus_field = true;
                        self.select = Some((s.chars().count(), s.chars().count()));
                        if !s.ends_with('/') {
                            self.message = None;
                        }
                    }
                }
                if suggestions.len() > MAX_SUGGESTIONS {
                    ui.label(RichText::new(format!("and {} more", suggestions.len() - MAX_SUGGESTIONS)).small().weak());
                }
            });
        }
        ui.horizontal(|ui| {
            let label = ui.label("File type");
            let options = [self.spec.file_type.filter_text(), "All files (*)".to_owned()];
            let mut all = self.all_files;
            egui::ComboBox::from_id_salt("file_dialog_type")
                .selected_text(if all { &options[1] } else { &options[0] })
                .show_ui(ui, |ui| {
                    ui.selectable_value(&mut all, false, &options[0]);
                    ui.selectable_value(&mut all, true, &options[1]);
                })
                .response
                .labelled_by(label.id);
            self.all_files = all;
            ui.checkbox(&mut self.show_hidden, "Show hidden files");
        });
        if let Some(m) = &self.message {
            ui.label(RichText::new(m).color(theme::ERROR));
        }
        ui.separator();
        if let Some(target) = self.confirm_replace.clone() {
            let name = target.file_name().map_or_else(|| target.display().to_string(), |n| n.to_string_lossy().into());
            let folder = target.parent().map(|p| p.display().to_string()).unwrap_or_default();
            ui.label(RichText::new(format!("{name} already exists in {folder}. Replace it?")).strong());
            ui.horizontal(|ui| {
                if ui.button("Replace").clicked() {
                    outcome = Some(DialogOutcome::Chosen(target.clone()));
                }
                if ui.button("Keep it").on_hover_text("Go back and choose another name").clicked() {
                    self.confirm_replace = None;
                    self.focus_field = true;
                }
            });
        } else {
            ui.horizontal(|ui| {
                let verb = match self.spec.mode {
                    DialogMode::Open => "Open",
                    DialogMode::Save => "Save",
                };
                if ui.button(verb).clicked() || enter {
                    outcome = outcome.clone().or_else(|| self.accept());
                }
                if ui.button("Cancel").clicked() || ui.input(|i| i.key_pressed(Key::Escape)) {
                    outcome = Some(DialogOutcome::Cancelled);
                }
            });
        }
        outcome
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn temp_dir(tag: &str) -> PathBuf {
        let d = std::env::temp_dir().join(format!("flowrise-file-dialog-{tag}-{}", std::process::id()));
        std::fs::remove_dir_all(&d).ok();
        std::fs::create_dir_all(&d).unwrap();
        d
    }

    fn spec(mode: DialogMode, dir: &Path) -> DialogSpec {
        DialogSpec {
            mode,
            title: "t".to_owned(),
            file_type: FileType::PROJECT,
            file_name: None,
            start_dir: dir.to_path_buf(),
        }
    }

    #[test]
    fn listing_puts_folders_first_and_filters_by_type() {
        let d = temp_dir("list");
        std::fs::create_dir(d.join("zeta")).unwrap();
        std::fs::write(d.join("b.ron"), "").unwrap();
        std::fs::write(d.join("a.csv"), "").unwrap();
        std::fs::write(d.join(".hidden.ron"), "").unwrap();
        let dlg = InWindowDialog::new(spec(DialogMode::Open, &d), "");
        let shown: Vec<_> =
            dlg.entries.as_ref().unwrap().iter().filter(|e| dlg.visible(e)).map(|e| e.name.clone()).collect();
        assert_eq!(shown, ["zeta", "b.ron"]);
        std::fs::remove_dir_all(&d).ok();
    }

    #[test]
    fn tab_completes_the_common_prefix_and_a_folder_gets_a_slash() {
        let d = temp_dir("complete");
        std::fs::create_dir(d.join("projects")).unwrap();
        std::fs::write(d.join("projects").join("plant-a.ron"), "").unwrap();
        std::fs::write(d.join("projects").join("plant-b.ron"), "").unwrap();
        let mut dlg = InWindowDialog::new(spec(DialogMode::Open, &d), "");
        dlg.path_text = "pro".to_owned();
        dlg.complete();
        assert_eq!(dlg.path_text, "projects/");
        dlg.complete();
        assert_eq!(dlg.path_text, "projects/plant-", "the shared part of both files");
        assert_eq!(dlg.suggestions().len(), 2);
        std::fs::remove_dir_all(&d).ok();
    }

    #[test]
    fn saving_adds_the_extension_asks_before_replacing_and_names_a_missing_folder() {
        let d = temp_dir("save");
        std::fs::write(d.join("old.ron"), "").unwrap();
        let mut dlg = InWindowDialog::new(spec(DialogMode::Save, &d), "");
        dlg.path_text = "new".to_owned();
        assert_eq!(dlg.accept(), Some(DialogOutcome::Chosen(dlg.dir.join("new.ron"))));
        dlg.path_text = "old".to_owned();
        assert_eq!(dlg.accept(), None, "an existing file is not chosen without asking");
        assert!(dlg.confirm_replace.is_some());
        dlg.path_text = "nowhere/x.ron".to_owned();
        assert_eq!(dlg.accept(), None);
        assert!(dlg.message.as_deref().unwrap().contains("does not exist"), "{:?}", dlg.message);
        std::fs::remove_dir_all(&d).ok();
    }

    #[test]
    fn an_unreadable_folder_is_a_message_with_its_path() {
        let d = temp_dir("unreadable");
        let mut dlg = InWindowDialog::new(spec(DialogMode::Open, &d), "");
        dlg.enter(d.join("missing"));
        let e = dlg.entries.clone().unwrap_err();
        assert!(e.contains("missing") && e.contains("cannot read"), "{e}");
        std::fs::remove_dir_all(&d).ok();
    }
}
