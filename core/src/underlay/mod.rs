//! Reading plan underlays: an image (PNG, JPEG), one page of a PDF
//! (rasterised by `hayro`) or a DXF drawing (`dxf`: lines, polylines,
//! arcs, circles and text as vector geometry).
//!
//! [`load_page`] reads a file into an [`UnderlayContent`] in the source's own
//! units (y up): image pixels, PDF points (1/72 in), DXF drawing units. It
//! never panics on a bad file; every refusal is an [`UnderlayError`] that
//! names the file, what is wrong and what to do. Reading is slow for big
//! files, so the window calls it on a worker thread.
//!
//! Bounds (all documented in docs/file-format.md):
//! - files above [`MAX_FILE_BYTES`] are refused before reading;
//! - images and PDF pages are kept at most [`MAX_RASTER_SIDE_PX`] pixels on
//!   their longer side (larger images are scaled down on load; the source
//!   unit stays the original pixel);
//! - a DXF drawing with more than [`MAX_DXF_ENTITIES`] entities is refused
//!   after a quick count, before it is parsed.

mod dxf_read;
pub mod invented;
mod raster;

use std::path::{Path, PathBuf};

pub use dxf_read::{MAX_DXF_ENTITIES, count_dxf_entities};
pub use raster::encode_png;

/// Largest plan file read, bytes (a 10^6-entity DXF is about 40 MB; a
/// scanned A0 plan at 300 dpi as PNG about 100 MB).
pub const MAX_FILE_BYTES: u64 = 256 * 1024 * 1024;

/// Longest side of an image or rendered PDF page kept in memory, pixels
/// (16 MP at most; the window's texture and the report's picture come from it).
pub const MAX_RASTER_SIDE_PX: u32 = 4096;

/// Longest side of the picture a PDF page is rendered to, pixels.
pub const PDF_RENDER_SIDE_PX: u32 = 3000;

/// What kind of file an underlay is, from its extension.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum SourceKind {
    /// PNG or JPEG image.
    Image,
    /// A page of a PDF.
    Pdf,
    /// DXF drawing.
    Dxf,
}

impl SourceKind {
    /// The kind of `path` by its extension (any case).
    #[must_use]
    pub fn of(path: &Path) -> Option<Self> {
        let ext = path.extension()?.to_string_lossy().to_ascii_lowercase();
        match ext.as_str() {
            "png" | "jpg" | "jpeg" => Some(Self::Image),
            "pdf" => Some(Self::Pdf),
            "dxf" => Some(Self::Dxf),
            _ => None,
        }
    }

    /// What a source unit is, for the window ("image pixel").
    #[must_use]
    pub fn unit_word(self) -> &'static str {
        match self {
            Self::Image => "image pixel",
            Self::Pdf => "PDF point (1/72 in)",
            Self::Dxf => "drawing unit",
        }
    }
}

/// A picture: straight (not premultiplied) RGBA, 8 bits per channel, rows
/// top to bottom.
#[derive(Debug, Clone, PartialEq)]
pub struct Raster {
    /// Width, pixels.
    pub width: u32,
    /// Height, pixels.
    pub height: u32,
    /// `width × height × 4` bytes.
    pub rgba: Vec<u8>,
    /// Source units per stored pixel (1 unless the image was scaled down;
    /// PDF points per pixel for a page).
    pub units_per_px: f64,
}

impl Raster {
    /// Size in source units `(width, height)`.
    #[must_use]
    pub fn size_units(&self) -> [f64; 2] {
        [f64::from(self.width) * self.units_per_px, f64::from(self.height) * self.units_per_px]
    }
}

/// A text of a drawing.
#[derive(Debug, Clone, PartialEq)]
pub struct DrawingText {
    /// Insertion point (lower left of the text), drawing units.
    pub at: [f64; 2],
    /// Letter height, drawing units.
    pub height: f64,
    /// Rotation, degrees anticlockwise.
    pub rotation_deg: f64,
    /// The text (formatting codes removed).
    pub text: String,
}

/// A drawing as polylines and texts, in drawing units (y up).
#[derive(Debug, Clone, PartialEq, Default)]
pub struct VectorDrawing {
    /// Every polyline's points one after the other.
    pub points: Vec<[f64; 2]>,
    /// Where each polyline starts in `points` (each has at least 2 points).
    pub starts: Vec<u32>,
    /// Texts.
    pub texts: Vec<DrawingText>,
    /// Lower-left and upper-right corner of everything, drawing units.
    pub bounds: ([f64; 2], [f64; 2]),
    /// Metres per drawing unit from the file's `$INSUNITS`, when it says.
    pub m_per_unit: Option<f64>,
    /// Entities read (drawn or not).
    pub entities: usize,
}

impl VectorDrawing {
    /// The polylines as point slices.
    pub fn polylines(&self) -> impl Iterator<Item = &[[f64; 2]]> {
        let n = self.starts.len();
        (0..n).filter_map(move |i| {
            let a = *self.starts.get(i)? as usize;
            let b = self.starts.get(i + 1).map_or(self.points.len(), |&s| s as usize);
            self.points.get(a..b)
        })
    }

    /// The end points of every line and polyline (snapping targets), drawing units.
    #[must_use]
    pub fn line_ends(&self) -> Vec<[f64; 2]> {
        let mut out = Vec::with_capacity(self.starts.len() * 2);
        for poly in self.polylines() {
            if let (Some(&a), Some(&b)) = (poly.first(), poly.last()) {
                out.push(a);
                out.push(b);
            }
        }
        out
    }

    fn push_polyline(&mut self, pts: &[[f64; 2]]) {
        let finite: Vec<[f64; 2]> = pts.iter().copied().filter(|p| p[0].is_finite() && p[1].is_finite()).collect();
        if finite.len() < 2 {
            return;
        }
        self.starts.push(u32::try_from(self.points.len()).unwrap_or(u32::MAX));
        self.points.extend_from_slice(&finite);
    }
}

/// What an underlay file holds.
#[derive(Debug, Clone, PartialEq)]
pub enum UnderlayContent {
    /// An image or a rendered PDF page.
    Raster(Raster),
    /// A DXF drawing.
    Vector(VectorDrawing),
}

/// An underlay file as read.
#[derive(Debug, Clone, PartialEq)]
pub struct LoadedUnderlay {
    /// The file read.
    pub path: PathBuf,
    /// Its kind.
    pub kind: SourceKind,
    /// The page read, counted from 1 (1 for images and drawings).
    pub page: u32,
    /// How many pages the file has (1 for images and drawings).
    pub pages: u32,
    /// Its content.
    pub content: UnderlayContent,
}

impl LoadedUnderlay {
    /// Lower-left and upper-right corner of the content, source units.
    #[must_use]
    pub fn bounds(&self) -> ([f64; 2], [f64; 2]) {
        match &self.content {
            UnderlayContent::Raster(r) => ([0.0, 0.0], r.size_units()),
            UnderlayContent::Vector(v) => v.bounds,
        }
    }

    /// A first scale, metres per source unit, before the user sets it with
    /// two points: the DXF's own units when it names them; a PDF page at
    /// 1:100 (a common plan scale); an image `fit_width_m` wide.
    #[must_use]
    pub fn first_m_per_unit(&self, fit_width_m: f64) -> f64 {
        let (lo, hi) = self.bounds();
        let width = (hi[0] - lo[0]).max(hi[1] - lo[1]).max(1e-9);
        let fit = (fit_width_m / width).clamp(2e-6, 999.0);
        match (&self.content, self.kind) {
            (UnderlayContent::Vector(v), _) => v.m_per_unit.unwrap_or(fit),
            (_, SourceKind::Pdf) => 0.0254 / 72.0 * 100.0,
            _ => fit,
        }
    }
}

/// Why an underlay cannot be read.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error("plan underlay {path}: {message}")]
pub struct UnderlayError {
    /// The file.
    pub path: String,
    /// What is wrong and what to do.
    pub message: String,
}

pub(crate) fn fail(path: &Path, message: impl Into<String>) -> UnderlayError {
    UnderlayError { path: path.display().to_string(), message: message.into() }
}

/// Read an underlay file (the first page of a PDF).
///
/// # Errors
/// As [`load_page`].
pub fn load(path: &Path) -> Result<LoadedUnderlay, UnderlayError> {
    load_page(path, 1)
}

/// Read an underlay file; `page` (from 1) chooses the page of a PDF and is
/// ignored for images and drawings.
///
/// # Errors
/// [`UnderlayError`] naming the file and the fix: unknown kind, missing or
/// unreadable file, too large, corrupt image, encrypted or broken PDF, a
/// PDF page that is not there, a DXF with too many entities or nothing to
/// draw.
pub fn load_page(path: &Path, page: u32) -> Result<LoadedUnderlay, UnderlayError> {
    let Some(kind) = SourceKind::of(path) else {
        return Err(fail(path, "is not a plan file flowrise reads — choose a PNG, JPEG, PDF or DXF file"));
    };
    let meta = std::fs::metadata(path).map_err(|e| io_fail(path, &e))?;
    if meta.is_dir() {
        return Err(fail(path, "is a folder — choose the plan file inside it"));
    }
    if meta.len() > MAX_FILE_BYTES {
        return Err(fail(
            path,
            format!(
                "is {} MB; flowrise reads plan files up to {} MB — export the floor plan alone or at a lower resolution",
                meta.len() / (1024 * 1024),
                MAX_FILE_BYTES / (1024 * 1024)
            ),
        ));
    }
    let (content, page, pages) = match kind {
        SourceKind::Image => (UnderlayContent::Raster(raster::read_image(path)?), 1, 1),
        SourceKind::Pdf => {
            let (r, pages) = raster::read_pdf(path, page)?;
            (UnderlayContent::Raster(r), page, pages)
        }
        SourceKind::Dxf => (UnderlayContent::Vector(dxf_read::read_dxf(path)?), 1, 1),
    };
    Ok(LoadedUnderlay { path: path.to_path_buf(), kind, page, pages, content })
}

pub(crate) fn io_fail(path: &Path, e: &std::io::Error) -> UnderlayError {
    match e.kind() {
        std::io::ErrorKind::NotFound => fail(
            path,
            "the file is not there (moved, renamed or on a drive not connected) — put it back or choose it again",
        ),
        std::io::ErrorKind::PermissionDenied => fail(path, "flowrise may not read this file — check its permissions"),
        _ => fail(path, format!("cannot be read ({e})")),
    }
}

#[cfg(test)]
mod tests;
