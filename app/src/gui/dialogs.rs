//! Which file dialog to use, and the desktop's dialog on a worker thread.
//!
//! flowrise asks the desktop for its own file dialog where the desktop has
//! one, and otherwise draws its own ([`super::file_dialog`]). The choice:
//!
//! 1. **Preference**: File → "Use flowrise's own file dialog" (kept with
//!    the window preferences), or `FLOWRISE_FILE_DIALOG=in-window` in the
//!    environment, always uses the in-window dialog.
//! 2. **Detection** (once, on a worker thread when the window opens): on
//!    Linux the desktop's dialog is the XDG desktop portal's FileChooser,
//!    reached over the D-Bus session bus; rfd falls back to `zenity` when
//!    the portal fails. The desktop dialog counts as available when the
//!    session bus answers and the portal implements FileChooser, or when
//!    `zenity` is on `PATH`. Otherwise (no D-Bus, no portal, a headless or
//!    minimal desktop) the in-window dialog is used, and it says why.
//! 3. **Failure at use**: rfd reports a failed portal or zenity call only
//!    through the `log` crate (the dialog returns "nothing chosen", the
//!    same as Cancel). The window installs a logger ([`install_logger`])
//!    that prints errors to standard error and keeps rfd's; a dialog that
//!    returns nothing *with* an rfd error is a failure, and the in-window
//!    dialog opens in its place, naming the error.
//!
//! The desktop's dialog blocks the thread that calls it, so it runs on a
//! worker thread; the window stays drawn and offers to switch to the
//! in-window dialog while it waits.

use std::path::PathBuf;
use std::sync::Mutex;
use std::sync::mpsc::{Receiver, RecvTimeoutError};
use std::thread::JoinHandle;
use std::time::Duration;

use serde::{Deserialize, Serialize};

use super::file_dialog::{DialogMode, DialogSpec};

/// The file-dialog preference.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
pub enum DialogChoice {
    /// The desktop's dialog where it works, flowrise's own otherwise.
    #[default]
    Automatic,
    /// Always flowrise's own dialog.
    InWindow,
}

/// Environment variable that forces the in-window dialog (`in-window`).
pub const DIALOG_ENV: &str = "FLOWRISE_FILE_DIALOG";

/// Whether the desktop offers a file dialog.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Availability {
    /// Yes, through this (for people).
    Desktop(String),
    /// No, for this reason (for people).
    None(String),
}

/// The detection, run once on a worker thread.
#[derive(Debug)]
pub struct Probe {
    state: ProbeState,
}

#[derive(Debug)]
enum ProbeState {
    Running(Receiver<Availability>),
    Done(Availability),
}

impl Probe {
    /// No detection: the desktop's dialog is never used (the window is not
    /// on a desktop, e.g. in tests).
    #[must_use]
    pub fn none(reason: &str) -> Self {
        Self { state: ProbeState::Done(Availability::None(reason.to_owned())) }
    }

    /// A known answer.
    #[must_use]
    pub fn known(a: Availability) -> Self {
        Self { state: ProbeState::Done(a) }
    }

    /// Look at this process's environment on a worker thread.
    #[must_use]
    pub fn start() -> Self {
        let (tx, rx) = std::sync::mpsc::channel();
        std::thread::spawn(move || {
            let a = detect(
                std::env::var("DBUS_SESSION_BUS_ADDRESS").ok(),
                std::env::var_os("XDG_RUNTIME_DIR").map(PathBuf::from),
                std::env::var_os("PATH"),
            );
            tx.send(a).ok();
        });
        Self { state: ProbeState::Running(rx) }
    }

    /// The answer, waiting at most `wait` for a detection still running
    /// (a desktop bus that does not answer in time counts as none).
    pub fn availability(&mut self, wait: Duration) -> Availability {
        if let ProbeState::Running(rx) = &self.state {
            let a = match rx.recv_timeout(wait) {
                Ok(a) => a,
                Err(RecvTimeoutError::Timeout) => {
                    // Keep waiting next time; answer for now.
                    return Availability::None(format!("the desktop did not answer within {} s", wait.as_secs_f32()));
                }
                Err(RecvTimeoutError::Disconnected) => Availability::None("the detection stopped".to_owned()),
            };
            self.state = ProbeState::Done(a);
        }
        match &self.state {
            ProbeState::Done(a) => a.clone(),
            ProbeState::Running(_) => Availability::None("not known yet".to_owned()),
        }
    }
}

/// Look for a program on a `PATH`-style list of folders.
fn on_path(program: &str, path_var: Option<&std::ffi::OsStr>) -> Option<PathBuf> {
    std::env::split_paths(path_var?).map(|d| d.join(program)).find(|p| p.is_file())
}

/// Whether the desktop offers a file dialog, from the session bus address,
/// the runtime folder (where a bus socket may be) and `PATH`.
#[must_use]
pub fn detect(
    bus_address: Option<String>,
    runtime_dir: Option<PathBuf>,
    path_var: Option<std::ffi::OsString>,
) -> Availability {
    if cfg!(not(any(target_os = "linux", target_os = "freebsd", target_os = "openbsd", target_os = "netbsd"))) {
        return Availability::Desktop("the system's file dialog".to_owned());
    }
    let portal = portal_file_chooser(bus_address, runtime_dir);
    let zenity = on_path("zenity", path_var.as_deref());
    match (portal, zenity) {
        (Ok(()), _) => Availability::Desktop("the desktop portal's file dialog".to_owned()),
        (Err(why), Some(z)) => Availability::Desktop(format!("{} ({why})", z.display())),
        (Err(why), None) => Availability::None(format!("{why}; zenity is not installed")),
    }
}

/// Ask the session bus whether the desktop portal implements FileChooser.
#[cfg(target_os = "linux")]
fn portal_file_chooser(bus_address: Option<String>, runtime_dir: Option<PathBuf>) -> Result<(), String> {
    let address = bus_address.filter(|a| !a.is_empty()).or_else(|| {
        runtime_dir.map(|d| d.join("bus")).filter(|p| p.exists()).map(|p| format!("unix:path={}", p.display()))
    });
    let Some(address) = address else {
        return Err("no D-Bus session bus: DBUS_SESSION_BUS_ADDRESS is not set".to_owned());
    };
    zbus::block_on(async {
        let conn = zbus::connection::Builder::address(address.as_str())
            .map_err(|e| format!("the D-Bus address {address} is not usable: {e}"))?
            .build()
            .await
            .map_err(|e| format!("cannot reach the D-Bus session bus at {address}: {e}"))?;
        conn.call_method(
            Some("org.freedesktop.portal.Desktop"),
            "/org/freedesktop/portal/desktop",
            Some("org.freedesktop.DBus.Properties"),
            "Get",
            &("org.freedesktop.portal.FileChooser", "version"),
        )
        .await
        .map(|_| ())
        .map_err(|e| format!("the desktop portal offers no file chooser: {e}"))
    })
}

/// Without Linux's portal the question does not arise.
#[cfg(not(target_os = "linux"))]
fn portal_file_chooser(_bus_address: Option<String>, _runtime_dir: Option<PathBuf>) -> Result<(), String> {
    Err("no desktop portal on this system".to_owned())
}

/// Errors rfd logged since the last call (see [`install_logger`]).
static RFD_ERRORS: Mutex<Vec<String>> = Mutex::new(Vec::new());

fn take_rfd_errors() -> Vec<String> {
    RFD_ERRORS.lock().map(|mut v| std::mem::take(&mut *v)).unwrap_or_default()
}

/// Prints errors of every crate to standard error; keeps rfd's for the
/// dialog that is waiting for them.
#[derive(Debug)]
struct Logger;

impl log::Log for Logger {
    fn enabled(&self, metadata: &log::Metadata<'_>) -> bool {
        metadata.level() <= log::Level::Error
    }

    fn log(&self, record: &log::Record<'_>) {
        if !self.enabled(record.metadata()) {
            return;
        }
        let text = record.args().to_string();
        eprintln!("flowrise: {}: {text}", record.target());
        if record.target().starts_with("rfd")
            && let Ok(mut v) = RFD_ERRORS.lock()
        {
            v.push(text);
        }
    }

    fn flush(&self) {}
}

/// Install the logger (once per process; a second call, or a logger set
/// by someone else, leaves things as they are — failures then show as a
/// Cancel of the desktop's dialog).
pub fn install_logger() {
    if log::set_boxed_logger(Box::new(Logger)).is_ok() {
        log::set_max_level(log::LevelFilter::Error);
    }
}

/// What the desktop's dialog answered.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum DesktopAnswer {
    /// A file.
    Chosen(PathBuf),
    /// Closed without a choice.
    Cancelled,
    /// It failed; the reason.
    Failed(String),
}

/// The desktop's dialog, open on a worker thread.
#[derive(Debug)]
pub struct DesktopDialog {
    handle: JoinHandle<DesktopAnswer>,
}

impl DesktopDialog {
    /// Open the desktop's dialog for `spec`.
    #[must_use]
    pub fn open(spec: &DialogSpec) -> Self {
        let spec = spec.clone();
        let handle = std::thread::spawn(move || {
            take_rfd_errors();
            let mut d = rfd::FileDialog::new()
                .set_title(&spec.title)
                .add_filter(spec.file_type.filter_text(), &spec.file_type.extensions().collect::<Vec<_>>())
                .set_directory(&spec.start_dir);
            let picked = match spec.mode {
                DialogMode::Open => d.pick_file(),
                DialogMode::Save => {
                    if let Some(name) = &spec.file_name {
                        d = d.set_file_name(name);
                    }
                    d.save_file()
                }
            };
            let errors = take_rfd_errors();
            match picked {
                Some(p) => DesktopAnswer::Chosen(spec.with_extension(p)),
                None if errors.is_empty() => DesktopAnswer::Cancelled,
                None => DesktopAnswer::Failed(errors.join("; ")),
            }
        });
        Self { handle }
    }

    /// The answer once the dialog has closed.
    pub fn poll(self) -> Result<DesktopAnswer, Self> {
        if self.handle.is_finished() {
            Ok(self
                .handle
                .join()
                .unwrap_or_else(|_| DesktopAnswer::Failed("the desktop's file dialog stopped unexpectedly".to_owned())))
        } else {
            Err(self)
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn no_bus_and_no_zenity_means_the_in_window_dialog_with_the_reason() {
        let a = detect(None, None, Some("/nonexistent-folder".into()));
        let Availability::None(why) = a else { panic!("{a:?}") };
        assert!(why.contains("D-Bus") && why.contains("zenity"), "{why}");
    }

    #[test]
    fn a_bus_that_is_not_there_is_named() {
        let a = detect(Some("unix:path=/nonexistent-folder/bus".to_owned()), None, None);
        let Availability::None(why) = a else { panic!("{a:?}") };
        assert!(why.contains("/nonexistent-folder/bus"), "{why}");
    }

    #[test]
    fn zenity_on_path_counts_as_a_desktop_dialog() {
        let d = std::env::temp_dir().join(format!("flowrise-zenity-{}", std::process::id()));
        std::fs::create_dir_all(&d).unwrap();
        std::fs::write(d.join("zenity"), "").unwrap();
        let a = detect(None, None, Some(d.clone().into_os_string()));
        assert!(matches!(a, Availability::Desktop(ref s) if s.contains("zenity")), "{a:?}");
        std::fs::remove_dir_all(&d).ok();
    }

    #[test]
    fn a_running_probe_answers_within_the_wait() {
        let mut p = Probe::start();
        // This machine may or may not have a desktop; either way an answer comes.
        let a = p.availability(Duration::from_secs(10));
        assert!(matches!(a, Availability::Desktop(_) | Availability::None(_)));
    }
}
