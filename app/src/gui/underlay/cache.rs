//! Underlay files as read: one entry per file on disk (and page of a PDF), read on a worker
//! thread (a big PDF or DXF takes seconds), with what the window draws
//! from it cached beside it (the texture of a picture, a drawing's
//! geometry on the plan).

use std::collections::HashMap;
use std::path::{Path, PathBuf};
use std::sync::Arc;
use std::sync::mpsc::{Receiver, TryRecvError};

use flowrise_core::underlay::{LoadedUnderlay, UnderlayError};

use super::paint::Geometry;

/// Where reading a file stands.
#[derive(Debug)]
pub enum State {
    /// Being read on a worker thread.
    Loading(Receiver<Result<LoadedUnderlay, UnderlayError>>),
    /// Read.
    Ready(Arc<LoadedUnderlay>),
    /// Cannot be read: the message.
    Failed(String),
}

/// One file.
pub struct Entry {
    /// Where reading it stands.
    pub state: State,
    /// The picture on the graphics card (images and PDF pages).
    pub texture: Option<egui::TextureHandle>,
    /// A drawing's geometry on the plan for the placement it was made for.
    pub geometry: Option<Geometry>,
    /// Its failure was shown in the status line.
    pub reported: bool,
}

impl std::fmt::Debug for Entry {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("Entry")
            .field("state", &self.state)
            .field("texture", &self.texture.as_ref().map(egui::TextureHandle::id))
            .field("geometry", &self.geometry.is_some())
            .field("reported", &self.reported)
            .finish()
    }
}

impl Entry {
    fn new(state: State) -> Self {
        Self { state, texture: None, geometry: None, reported: false }
    }
}

/// A file on disk and the page of it shown (1 unless a later PDF page).
pub type Key = (PathBuf, u32);

/// Read `path` (its page `page`) on a worker thread (or here, when
/// `background` is off).
pub fn spawn(path: &Path, page: u32, background: bool) -> State {
    let (tx, rx) = std::sync::mpsc::channel();
    let p = path.to_path_buf();
    if background {
        let spawned = std::thread::Builder::new().name("underlay-read".into()).spawn(move || {
            // The window may be gone when the file is read: nothing to tell.
            tx.send(flowrise_core::underlay::load_page(&p, page)).ok();
        });
        if let Err(e) = spawned {
            return State::Failed(format!("cannot start reading it ({e})"));
        }
        State::Loading(rx)
    } else {
        match flowrise_core::underlay::load_page(&p, page) {
            Ok(l) => State::Ready(Arc::new(l)),
            Err(e) => State::Failed(e.message),
        }
    }
}

/// Move a worker's answer into the state, when it has come.
pub fn poll(state: &mut State) {
    let State::Loading(rx) = state else { return };
    *state = match rx.try_recv() {
        Ok(Ok(l)) => State::Ready(Arc::new(l)),
        Ok(Err(e)) => State::Failed(e.message),
        Err(TryRecvError::Empty) => return,
        Err(TryRecvError::Disconnected) => State::Failed("reading it stopped unexpectedly — try Reload".to_owned()),
    };
}

/// The files read, by their path on disk and page.
#[derive(Debug, Default)]
pub struct Files {
    entries: HashMap<Key, Entry>,
}

impl Files {
    /// The entry of `key`, reading the file when it is not known yet.
    pub fn get(&mut self, key: &Key, background: bool) -> &mut Entry {
        let e = self.entries.entry(key.clone()).or_insert_with(|| Entry::new(spawn(&key.0, key.1, background)));
        poll(&mut e.state);
        e
    }

    /// Put a file read elsewhere (an import) in.
    pub fn insert(&mut self, key: Key, loaded: Arc<LoadedUnderlay>) {
        self.entries.insert(key, Entry::new(State::Ready(loaded)));
    }

    /// Forget a file (Reload reads it again).
    pub fn forget(&mut self, key: &Key) {
        self.entries.remove(key);
    }

    /// Forget every file not in `keep` (files of another project).
    pub fn retain(&mut self, keep: &[Key]) {
        self.entries.retain(|k, _| keep.contains(k));
    }

    /// True while any file is being read.
    pub fn any_loading(&self) -> bool {
        self.entries.values().any(|e| matches!(e.state, State::Loading(_)))
    }
}
