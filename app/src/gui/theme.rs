//! Colours of the flowrise look and the colour scale of the canvas.

use egui::{Color32, Stroke};
use flowrise_core::design::{FindingKind, PipeResult, Solution};
use flowrise_core::project::RunId;
use serde::{Deserialize, Serialize};

/// Canvas paper.
pub const PAPER: Color32 = Color32::from_rgb(0xf4, 0xf3, 0xef);
/// Minor grid lines.
pub const GRID_MINOR: Color32 = Color32::from_rgb(0xe6, 0xe4, 0xde);
/// Major grid lines.
pub const GRID_MAJOR: Color32 = Color32::from_rgb(0xd5, 0xd2, 0xca);
/// Ink for symbols and labels on the paper.
pub const INK: Color32 = Color32::from_rgb(0x26, 0x2b, 0x33);
/// Casing under coloured runs (keeps light colours readable on paper).
pub const CASING: Color32 = Color32::from_rgb(0x3a, 0x3f, 0x48);
/// Runs without results yet.
pub const NO_RESULT: Color32 = Color32::from_rgb(0x9a, 0x9e, 0xa6);
/// Selection highlight.
pub const SELECT: Color32 = Color32::from_rgb(0xe0, 0x4f, 0x1d);
/// Hover highlight.
pub const HOVER: Color32 = Color32::from_rgb(0x1f, 0x78, 0xc8);
/// Error text.
pub const ERROR: Color32 = Color32::from_rgb(0xd0, 0x30, 0x30);
/// Warning text.
pub const WARNING: Color32 = Color32::from_rgb(0xc0, 0x7a, 0x00);
/// The supply leg in charts (warm).
pub const SUPPLY: Color32 = Color32::from_rgb(0xc8, 0x3a, 0x2a);
/// The return leg in charts (cool).
pub const RETURN: Color32 = Color32::from_rgb(0x2a, 0x5c, 0xb8);
/// Warning colour for running text: darker than [`WARNING`] so a sentence
/// reads on the light panels (contrast about 6.8:1 on white).
pub const WARNING_TEXT: Color32 = Color32::from_rgb(0x8a, 0x4b, 0x00);
/// Accent of the flowrise look (top strip, active tool).
pub const ACCENT: Color32 = Color32::from_rgb(0x0f, 0x6e, 0x6a);

/// Colour of `t` ∈ [0, 1] on the run-colour scale (clamped; NaN → 0).
///
/// The same scale as the report's plan: viridis (van der Walt & Smith 2015),
/// perceptually uniform and readable with the common forms of colour-vision
/// deficiency, its stops checked against matplotlib 3.10.9
/// (`flowrise_core::report::svg::VIRIDIS_STOPS`).
#[must_use]
pub fn scale_colour(t: f64) -> Color32 {
    let [r, g, b] = flowrise_core::report::svg::viridis(t);
    Color32::from_rgb(r, g, b)
}

/// What the run colours show.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
pub enum ColourBy {
    /// Velocity / velocity limit of the run's class.
    #[default]
    VelocityMargin,
    /// Pressure gradient / the design gradient limit.
    Gradient,
    /// |operating flow / design flow − 1| (installed mode), full scale 30 %.
    FlowDeviation,
}

impl ColourBy {
    /// All choices, in menu order.
    pub const ALL: [Self; 3] = [Self::VelocityMargin, Self::Gradient, Self::FlowDeviation];

    /// Menu text.
    #[must_use]
    pub fn name(self) -> &'static str {
        match self {
            Self::VelocityMargin => "velocity / limit",
            Self::Gradient => "pressure gradient / limit",
            Self::FlowDeviation => "flow deviation from design",
        }
    }

    /// Legend title and the meaning of scale value 1.
    #[must_use]
    pub fn legend(self) -> (&'static str, &'static str) {
        match self {
            Self::VelocityMargin => ("v / v limit", "1 = at the limit"),
            Self::Gradient => ("R / R limit", "1 = at the limit"),
            Self::FlowDeviation => ("|flow / design − 1|", "1 = 30 % off"),
        }
    }

    /// Findings that stand behind a run drawn over the limit in this mode
    /// (a flow deviation has its findings on the emitters: never dashed).
    #[must_use]
    pub fn finding_kinds(self) -> &'static [FindingKind] {
        match self {
            Self::VelocityMargin => &FindingKind::VELOCITY,
            Self::Gradient => &FindingKind::GRADIENT,
            Self::FlowDeviation => &[],
        }
    }

    /// Full-scale deviation for [`Self::FlowDeviation`].
    const DEVIATION_FULL_SCALE: f64 = 0.30;

    /// Scale value of one pipe (1 = at the limit).
    #[must_use]
    pub fn pipe_value(self, p: &PipeResult) -> f64 {
        match self {
            Self::VelocityMargin => p.velocity_m_s / p.velocity_limit_m_s.max(1e-9),
            Self::Gradient => p.gradient_pa_m / p.gradient_limit_pa_m.max(1e-9),
            Self::FlowDeviation => {
                if p.design_flow_kg_s > 1e-12 {
                    (p.flow_kg_s / p.design_flow_kg_s - 1.0).abs() / Self::DEVIATION_FULL_SCALE
                } else {
                    0.0
                }
            }
        }
    }

    /// Scale value of a run: the worse of its supply and return pipes.
    #[must_use]
    pub fn run_value(self, sol: &Solution, run: RunId) -> Option<f64> {
        sol.run_pipes(run).map(|p| self.pipe_value(p)).reduce(f64::max)
    }
}

/// Stroke of a run drawn with scale value `value` (`None` = no result).
#[must_use]
pub fn run_stroke(value: Option<f64>, zoom_px_per_m: f32) -> (Stroke, bool) {
    let base = (zoom_px_per_m * 0.08).clamp(2.5, 5.0);
    match value {
        None => (Stroke::new(base, NO_RESULT), false),
        Some(v) if v > 1.0 + 1e-9 => (Stroke::new(base * 1.8, scale_colour(1.0)), true),
        Some(v) => (Stroke::new(base, scale_colour(v)), false),
    }
}

/// Apply the flowrise look to a context (light, calm, teal accent).
pub fn apply_style(ctx: &egui::Context) {
    ctx.set_visuals(egui::Visuals::light());
    ctx.all_styles_mut(|style| {
        style.spacing.item_spacing = egui::vec2(7.0, 5.0);
        style.spacing.button_padding = egui::vec2(7.0, 3.0);
        style.visuals.selection.bg_fill = Color32::from_rgb(0xc6, 0xe4, 0xe1);
        style.visuals.selection.stroke = Stroke::new(1.0, ACCENT);
        style.visuals.hyperlink_color = ACCENT;
        style.visuals.panel_fill = Color32::from_rgb(0xfa, 0xfa, 0xf8);
    });
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn scale_ends_are_the_checked_table_ends_and_clamps() {
        use flowrise_core::report::svg::VIRIDIS_STOPS;
        let [r, g, b] = VIRIDIS_STOPS[0];
        assert_eq!(scale_colour(0.0), Color32::from_rgb(r, g, b));
        let [r, g, b] = VIRIDIS_STOPS[VIRIDIS_STOPS.len() - 1];
        assert_eq!(scale_colour(1.0), Color32::from_rgb(r, g, b));
        assert_eq!(scale_colour(7.0), scale_colour(1.0));
        assert_eq!(scale_colour(f64::NAN), scale_colour(0.0));
    }
}
