//! Images (PNG, JPEG via `image`) and PDF pages (rendered by `hayro`) as
//! [`Raster`]s, and the PNG the report embeds.

use std::io::Cursor;
use std::path::Path;
use std::sync::Arc;

use super::{MAX_RASTER_SIDE_PX, PDF_RENDER_SIDE_PX, Raster, UnderlayError, fail, io_fail};

/// Widest or tallest image decoded at all, pixels (a 1,200 dpi A0 scan is
/// about 56,000 × 40,000 px; past this the decoder refuses).
const MAX_DECODE_SIDE_PX: u32 = 60_000;

/// Memory the image decoder may use, bytes.
const MAX_DECODE_BYTES: u64 = 2 * 1024 * 1024 * 1024;

/// A picture at most `max_side` pixels on its longer side: scaled down
/// (keeping its aspect) when larger; the factor goes into `units_per_px`.
fn bounded(img: image::DynamicImage, units_per_px: f64, max_side: u32) -> Raster {
    let (w, h) = (img.width(), img.height());
    let img = if w.max(h) > max_side { img.thumbnail(max_side, max_side) } else { img };
    let factor = f64::from(w) / f64::from(img.width().max(1));
    let rgba = img.to_rgba8();
    Raster { width: rgba.width(), height: rgba.height(), rgba: rgba.into_raw(), units_per_px: units_per_px * factor }
}

impl Raster {
    /// The same picture at most `max_side` pixels on its longer side (a
    /// copy; scaled down when larger, `units_per_px` adjusted).
    #[must_use]
    pub fn downscaled(&self, max_side: u32) -> Self {
        if self.width.max(self.height) <= max_side {
            return self.clone();
        }
        match image::RgbaImage::from_raw(self.width, self.height, self.rgba.clone()) {
            Some(buf) => bounded(image::DynamicImage::ImageRgba8(buf), self.units_per_px, max_side),
            None => self.clone(),
        }
    }
}

/// Read a PNG or JPEG file (by its content, whatever its extension says).
pub(super) fn read_image(path: &Path) -> Result<Raster, UnderlayError> {
    let reader = image::ImageReader::open(path).map_err(|e| io_fail(path, &e))?;
    let mut reader = reader.with_guessed_format().map_err(|e| io_fail(path, &e))?;
    let mut limits = image::Limits::default();
    limits.max_image_width = Some(MAX_DECODE_SIDE_PX);
    limits.max_image_height = Some(MAX_DECODE_SIDE_PX);
    limits.max_alloc = Some(MAX_DECODE_BYTES);
    reader.limits(limits);
    if reader.format().is_none() {
        return Err(fail(
            path,
            "is not a PNG or JPEG image (its first bytes are neither) — the file may be damaged; export the plan again",
        ));
    }
    let img = reader.decode().map_err(|e| match e {
        image::ImageError::Limits(_) => fail(
            path,
            format!(
                "is larger than flowrise decodes ({MAX_DECODE_SIDE_PX} px a side, 2 GB) — export the plan at a lower resolution"
            ),
        ),
        image::ImageError::IoError(e) => io_fail(path, &e),
        other => fail(path, format!("is damaged or not a PNG or JPEG image ({other}) — export the plan again")),
    })?;
    Ok(bounded(img, 1.0, MAX_RASTER_SIDE_PX))
}

/// Render page `page` (from 1) of a PDF file on white; with the file's
/// page count.
pub(super) fn read_pdf(path: &Path, page: u32) -> Result<(Raster, u32), UnderlayError> {
    use hayro::hayro_syntax::{LoadPdfError, Pdf};
    let bytes = std::fs::read(path).map_err(|e| io_fail(path, &e))?;
    if !bytes.starts_with(b"%PDF-") && !bytes.get(..1024).unwrap_or(&bytes[..]).windows(5).any(|w| w == b"%PDF-") {
        return Err(fail(
            path,
            "is not a PDF (it does not start with %PDF-) — the file may be damaged; export the plan again",
        ));
    }
    let pdf = Pdf::new(Arc::new(bytes)).map_err(|e| match e {
        LoadPdfError::Decryption(_) => fail(
            path,
            "is encrypted (password-protected); flowrise reads unprotected PDFs only — \
             save an unprotected copy of the plan (e.g. print it to a new PDF) and choose that",
        ),
        LoadPdfError::Invalid => fail(path, "is damaged: its structure cannot be read — export the plan to PDF again"),
    })?;
    let pages = pdf.pages();
    let count = u32::try_from(pages.len()).unwrap_or(u32::MAX);
    if count == 0 {
        return Err(fail(path, "has no page — export the plan to PDF again"));
    }
    let Some(page) = page.checked_sub(1).and_then(|i| pages.get(i as usize)) else {
        return Err(fail(
            path,
            format!(
                "has {count} page{} and page {page} was asked for — choose a page from 1 to {count}",
                if count == 1 { "" } else { "s" }
            ),
        ));
    };
    let (w_pt, h_pt) = page.render_dimensions();
    if !(w_pt.is_finite() && h_pt.is_finite() && w_pt >= 1.0 && h_pt >= 1.0) {
        return Err(fail(path, format!("the page has no usable size ({w_pt} × {h_pt} pt) — export the plan again")));
    }
    let scale = PDF_RENDER_SIDE_PX as f32 / w_pt.max(h_pt);
    let settings = hayro::PixmapSettings {
        x_scale: scale,
        y_scale: scale,
        bg_color: hayro::vello_cpu::color::palette::css::WHITE,
    };
    // A rasteriser bug on an odd file must not take the program down: a
    // panic inside it becomes this file's message.
    let rendered = std::panic::catch_unwind(std::panic::AssertUnwindSafe(|| {
        let cache = hayro::RenderCache::new();
        hayro::render(
            page,
            &cache,
            &hayro::hayro_interpret::InterpreterSettings::default(),
            &hayro::RenderSettings::default(),
            &settings,
        )
    }))
    .map_err(|_| fail(path, "the page could not be drawn — export the plan to PDF again or as a PNG"))?;
    let (w, h) = (u32::from(rendered.width()), u32::from(rendered.height()));
    if w == 0 || h == 0 {
        return Err(fail(path, "the page rendered empty — export the plan again or as a PNG"));
    }
    // Opaque white background: premultiplied and straight RGBA are the same.
    let rgba = rendered.data_as_u8_slice().to_vec();
    let units_per_px = f64::from(w_pt) / f64::from(w);
    let Some(buf) = image::RgbaImage::from_raw(w, h, rgba) else {
        return Err(fail(path, "the page rendered to an unexpected size — export the plan again or as a PNG"));
    };
    Ok((bounded(image::DynamicImage::ImageRgba8(buf), units_per_px, MAX_RASTER_SIDE_PX), count))
}

/// A raster as PNG bytes at most `max_side` pixels on its longer side,
/// with `opacity` (0–1) applied to its alpha (the report's picture).
#[must_use]
pub fn encode_png(r: &Raster, max_side: u32, opacity: f64) -> Option<Vec<u8>> {
    let buf = image::RgbaImage::from_raw(r.width, r.height, r.rgba.clone())?;
    let small = bounded(image::DynamicImage::ImageRgba8(buf), 1.0, max_side);
    let mut rgba = small.rgba;
    let k = opacity.clamp(0.0, 1.0);
    for px in rgba.chunks_exact_mut(4) {
        px[3] = (f64::from(px[3]) * k).round() as u8;
    }
    let img = image::RgbaImage::from_raw(small.width, small.height, rgba)?;
    let mut out = Cursor::new(Vec::new());
    img.write_to(&mut out, image::ImageFormat::Png).ok()?;
    Some(out.into_inner())
}
