//! The window's panic hook writes a crash report that names the last
//! autosave (issue 7). Its own test binary: the hook is process-wide.
//!
//! Run: `cargo test -p flowrise --test crash`.

#![allow(clippy::unwrap_used, clippy::panic)]

use std::time::Duration;

use flowrise::gui::recovery::{Autosaver, RecoveryConfig, install_crash_hook};
use flowrise_core::project::Project;

#[test]
fn a_panic_writes_a_crash_report_naming_the_autosave() {
    let dir = std::env::temp_dir().join(format!("flowrise-crash-{}", std::process::id()));
    std::fs::remove_dir_all(&dir).ok();
    let cfg = RecoveryConfig { dir: dir.clone(), interval: Duration::ZERO, every_edits: 1 };
    let mut saver = Autosaver::start(cfg, 0).unwrap();
    let mut p = Project::new("Unsaved sketch");
    p.revision = 3;
    saver.tick(&p, true, None, false);
    let autosave = saver.project_path();
    assert!(autosave.exists());

    install_crash_hook();
    let caught = std::panic::catch_unwind(|| panic!("simulated internal error 4711"));
    drop(std::panic::take_hook());
    assert!(caught.is_err());

    let reports: Vec<_> = std::fs::read_dir(&dir)
        .unwrap()
        .flatten()
        .filter(|e| e.file_name().to_string_lossy().starts_with("crash-"))
        .collect();
    assert_eq!(reports.len(), 1, "one crash report");
    let text = std::fs::read_to_string(reports[0].path()).unwrap();
    assert!(text.contains("simulated internal error 4711"), "the message: {text}");
    assert!(text.contains("crash.rs"), "the place");
    assert!(text.contains(&autosave.display().to_string()), "the autosave path: {text}");
    assert!(text.contains("Start flowrise again to recover it"));
    // The autosave itself is intact and loads.
    assert_eq!(Project::load(&autosave).unwrap().name, "Unsaved sketch");
}
