//! The pump chart.

use super::nice_step;
use crate::design::PumpResult;
use crate::pump::PumpControl;

/// The pump chart (`class="pump-chart"`): the pump's maximum curve, its
/// control curve, the system curve through the operating point, the
/// operating point and the duty point. `None` without a pump result.
#[allow(clippy::too_many_lines)] // reason: one drawing, layer by layer
pub(in crate::report) fn pump_chart(pump: Option<&PumpResult>) -> Option<String> {
    const W: f64 = 560.0;
    const H: f64 = 320.0;
    let (l, r, t, b) = (58.0, 20.0, 16.0, 44.0);
    let pump = pump?;
    let curve = pump.curve.as_ref()?;
    let q_op = pump.operating_flow_m3_h.max(0.0);
    let h_op = pump.operating_head_pa / 1000.0;
    let (q_d, h_d) = (pump.design_flow_m3_h, pump.duty_head_pa / 1000.0);
    let q_max = curve.max_flow_m3_h().max(q_op * 1.3).max(q_d * 1.3).max(0.1);
    // Head range with room above the curves for the legend.
    let h_max = curve.shutoff_head_kpa().max(h_d).max(h_op) * 1.35;
    if !(q_max.is_finite() && h_max.is_finite() && h_max > 0.0) {
        return None;
    }
    let sx = |q: f64| l + q / q_max * (W - l - r);
    let sy = |h: f64| H - b - h.clamp(0.0, h_max) / h_max * (H - t - b);
    let mut out = String::new();
    w!(
        out,
        "<svg class=\"pump-chart\" xmlns=\"http://www.w3.org/2000/svg\" viewBox=\"0 0 {W} {H}\" width=\"{W}\" height=\"{H}\" role=\"img\" \
         aria-label=\"Pump and system curves\"><rect x=\"0.5\" y=\"0.5\" width=\"{}\" height=\"{}\" fill=\"#ffffff\" stroke=\"#cccccc\"/>",
        W - 1.0,
        H - 1.0
    );
    // Grid and axes.
    let qs = nice_step(q_max, 6.0);
    let hs = nice_step(h_max, 6.0);
    let mut q = 0.0;
    while q <= q_max + 1e-9 {
        let x = sx(q);
        w!(
            out,
            "<line x1=\"{x:.1}\" y1=\"{t}\" x2=\"{x:.1}\" y2=\"{:.1}\" stroke=\"#eeeeee\"/><text x=\"{x:.1}\" y=\"{:.1}\" class=\"lg\" text-anchor=\"middle\">{}</text>",
            H - b,
            H - b + 14.0,
            fmt_tick(q)
        );
        q += qs;
    }
    let mut h = 0.0;
    while h <= h_max + 1e-9 {
        let y = sy(h);
        w!(
            out,
            "<line x1=\"{l}\" y1=\"{y:.1}\" x2=\"{:.1}\" y2=\"{y:.1}\" stroke=\"#eeeeee\"/><text x=\"{:.1}\" y=\"{:.1}\" class=\"lg\" text-anchor=\"end\">{}</text>",
            W - r,
            l - 6.0,
            y + 3.0,
            fmt_tick(h)
        );
        h += hs;
    }
    w!(
        out,
        "<line x1=\"{l}\" y1=\"{t}\" x2=\"{l}\" y2=\"{:.1}\" stroke=\"#000000\"/><line x1=\"{l}\" y1=\"{:.1}\" x2=\"{:.1}\" y2=\"{:.1}\" stroke=\"#000000\"/>\
         <text x=\"{:.1}\" y=\"{:.1}\" class=\"lb\" text-anchor=\"middle\">flow, m³/h</text>\
         <text x=\"14\" y=\"{:.1}\" class=\"lb\" text-anchor=\"middle\" transform=\"rotate(-90 14 {:.1})\">head, kPa</text>",
        H - b,
        H - b,
        W - r,
        H - b,
        (l + W - r) / 2.0,
        H - 8.0,
        (t + H - b) / 2.0,
        (t + H - b) / 2.0
    );
    let n = 80;
    let sample = |f: &dyn Fn(f64) -> Option<f64>| -> String {
        (0..=n)
            .filter_map(|i| {
                let q = q_max * f64::from(i) / f64::from(n);
                f(q).filter(|h| h.is_finite() && *h >= 0.0 && *h <= h_max).map(|h| format!("{:.1},{:.1}", sx(q), sy(h)))
            })
            .collect::<Vec<_>>()
            .join(" ")
    };
    let pump_pts = sample(&|q| curve.head_kpa(q).ok());
    w!(
        out,
        "<polyline class=\"pump-curve\" points=\"{pump_pts}\" fill=\"none\" stroke=\"#00224e\" stroke-width=\"2.5\"/>"
    );
    if !matches!(pump.control, PumpControl::FixedSpeed) && q_d > 0.0 {
        let ctrl_pts = sample(&|q| pump.control.head_kpa(curve, q, q_d).ok());
        w!(
            out,
            "<polyline class=\"control-curve\" points=\"{ctrl_pts}\" fill=\"none\" stroke=\"#00224e\" stroke-width=\"1.5\" stroke-dasharray=\"6 4\"/>"
        );
    }
    if q_op > 0.0 {
        let sys_pts = sample(&|q| Some(h_op * (q / q_op).powi(2)));
        w!(
            out,
            "<polyline class=\"system-curve\" points=\"{sys_pts}\" fill=\"none\" stroke=\"#7c7b78\" stroke-width=\"2\"/>"
        );
    }
    let (ox, oy) = (sx(q_op), sy(h_op));
    w!(
        out,
        "<circle class=\"operating-point\" cx=\"{ox:.1}\" cy=\"{oy:.1}\" r=\"5\" fill=\"#c8a000\" stroke=\"#000000\" stroke-width=\"1.5\"/>"
    );
    let (dx, dy) = (sx(q_d), sy(h_d));
    w!(
        out,
        "<path class=\"duty-point\" d=\"M{:.1},{dy:.1} L{dx:.1},{:.1} L{:.1},{dy:.1} L{dx:.1},{:.1} Z\" fill=\"none\" stroke=\"#000000\" stroke-width=\"1.5\"/>",
        dx - 8.0,
        dy - 8.0,
        dx + 8.0,
        dy + 8.0
    );
    // Legend.
    let lx = W - r - 220.0;
    w!(
        out,
        "<g class=\"chart-legend\" transform=\"translate({lx:.1},{:.1})\"><rect x=\"-6\" y=\"-12\" width=\"222\" height=\"80\" fill=\"#ffffff\" stroke=\"#cccccc\"/>\
         <line x1=\"0\" y1=\"0\" x2=\"24\" y2=\"0\" stroke=\"#00224e\" stroke-width=\"2.5\"/><text x=\"30\" y=\"3\" class=\"lg\">pump, maximum curve</text>\
         <line x1=\"0\" y1=\"14\" x2=\"24\" y2=\"14\" stroke=\"#00224e\" stroke-width=\"1.5\" stroke-dasharray=\"6 4\"/><text x=\"30\" y=\"17\" class=\"lg\">pump under its control</text>\
         <line x1=\"0\" y1=\"28\" x2=\"24\" y2=\"28\" stroke=\"#7c7b78\" stroke-width=\"2\"/><text x=\"30\" y=\"31\" class=\"lg\">system (through the operating point)</text>\
         <circle cx=\"12\" cy=\"42\" r=\"4.5\" fill=\"#c8a000\" stroke=\"#000000\"/><text x=\"30\" y=\"45\" class=\"lg\">operating {:.2} m³/h, {:.1} kPa</text>\
         <path d=\"M6,56 L12,50 L18,56 L12,62 Z\" fill=\"#ffffff\" stroke=\"#000000\"/><text x=\"30\" y=\"59\" class=\"lg\">duty {:.2} m³/h, {:.1} kPa</text></g>",
        t + 16.0,
        q_op,
        h_op,
        q_d,
        h_d
    );
    out.push_str("</svg>");
    Some(out)
}

fn fmt_tick(x: f64) -> String {
    let s = format!("{x:.3}");
    s.trim_end_matches('0').trim_end_matches('.').to_owned()
}
