//! Root finding for the water-side solves of [`super::Characteristic`]:
//! bracketing an increasing function from one point, then Newton in ln(x)
//! safeguarded by bisection of the bracket.

/// A bracket [lo, hi] of an increasing function with h(lo) ≤ 0 ≤ h(hi) and
/// the two values.
#[derive(Debug, Clone, Copy)]
pub(super) struct Bracket {
    lo: f64,
    hi: f64,
    h_lo: f64,
    h_hi: f64,
}

/// Why no bracket was found: h stays below zero (or undefined) up to the
/// largest u tried, or above zero down to the smallest.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) enum Unbracketed {
    Below,
    Above,
}

/// Bracket the root of the increasing `h` by halving and doubling from
/// u = 1 (at most 1100 steps each way, which reaches the ends of the f64
/// range).
pub(super) fn bracket_from_one(h: &impl Fn(f64) -> f64) -> Result<Bracket, Unbracketed> {
    let (mut lo, mut hi) = (1.0_f64, 1.0_f64);
    let h_one = h(1.0);
    let mut h_lo = h_one;
    for _ in 0..1100 {
        if h_lo <= 0.0 {
            break;
        }
        lo *= 0.5;
        h_lo = h(lo);
    }
    let mut h_hi = h_one;
    for _ in 0..1100 {
        if h_hi >= 0.0 {
            break;
        }
        hi *= 2.0;
        h_hi = h(hi);
    }
    if h_lo <= 0.0 && h_hi >= 0.0 {
        Ok(Bracket { lo, hi, h_lo, h_hi })
    } else if h_hi < 0.0 {
        Err(Unbracketed::Below)
    } else {
        Err(Unbracketed::Above)
    }
}

/// The root (as u) of an increasing function of s = ln u, given as
/// `h_and_slope(u) = (h, dh/ds)`, by Newton's method from s = `s0`, each
/// step kept inside the bracket the evaluations so far establish (a
/// bisection step when Newton leaves it; at most a factor e² in u while one
/// side is still open). Converged when the step is below 1e-13 in s. None
/// after 60 steps or on a non-finite value (the caller falls back to the
/// bracketing solver).
pub(super) fn newton_in_log(h_and_slope: &impl Fn(f64) -> (f64, f64), s0: f64) -> Option<f64> {
    const MAX_OPEN_STEP: f64 = 2.0;
    let (mut lo, mut hi) = (f64::NEG_INFINITY, f64::INFINITY);
    let mut s = s0;
    for _ in 0..60 {
        let u = s.exp();
        let (v, d) = h_and_slope(u);
        if v == 0.0 {
            return Some(u);
        }
        if v < 0.0 {
            lo = s;
        } else if v > 0.0 {
            hi = s;
        } else {
            return None;
        }
        let newton = s - v / d;
        let next = if newton > lo && newton < hi && d > 0.0 {
            newton.clamp(s - MAX_OPEN_STEP, s + MAX_OPEN_STEP)
        } else if lo.is_finite() && hi.is_finite() {
            0.5 * (lo + hi)
        } else if lo.is_finite() {
            s + MAX_OPEN_STEP
        } else {
            s - MAX_OPEN_STEP
        };
        if !next.is_finite() || u <= 0.0 || !u.is_finite() {
            return None;
        }
        if (next - s).abs() <= 1e-13 || hi - lo <= 1e-13 {
            return Some(next.exp());
        }
        s = next;
    }
    None
}

/// The root of the increasing `h` inside `b`, as u: false position in ln u
/// with the Illinois modification (the value kept at a stale end is halved)
/// and a bisection step when two steps have not halved the bracket; stops
/// at a relative width of 1e-13, returning the geometric middle.
pub(super) fn root_in_log(h: &impl Fn(f64) -> f64, b: Bracket) -> f64 {
    let (mut s_lo, mut s_hi) = (b.lo.ln(), b.hi.ln());
    let (mut h_lo, mut h_hi) = (b.h_lo, b.h_hi);
    if h_lo == 0.0 {
        return b.lo;
    }
    if h_hi == 0.0 {
        return b.hi;
    }
    // Which end moved last (−1 low, +1 high, 0 none) and the width two steps ago.
    let mut last_side = 0_i8;
    let mut width_before = [s_hi - s_lo; 2];
    for step in 0..400 {
        let width = s_hi - s_lo;
        if width.is_nan() || width <= 1e-13 {
            break;
        }
        let bisect = step >= 2 && width > 0.5 * width_before[step % 2];
        width_before[step % 2] = width;
        let mut s = if bisect { 0.5 * (s_lo + s_hi) } else { s_lo - h_lo * width / (h_hi - h_lo) };
        // Stay strictly inside, a little off the ends so a bracket end
        // that is almost the root still closes in.
        let margin = 0.25e-13_f64.max(1e-3 * width).min(0.25 * width);
        if !(s >= s_lo + margin && s <= s_hi - margin) {
            s = if s.is_nan() { 0.5 * (s_lo + s_hi) } else { s.clamp(s_lo + margin, s_hi - margin) };
        }
        if s <= s_lo || s >= s_hi {
            break;
        }
        let v = h(s.exp());
        if v == 0.0 {
            return s.exp();
        }
        if v < 0.0 {
            s_lo = s;
            h_lo = v;
            if last_side == -1 {
                h_hi *= 0.5;
            }
            last_side = -1;
        } else if v > 0.0 {
            s_hi = s;
            h_hi = v;
            if last_side == 1 {
                h_lo *= 0.5;
            }
            last_side = 1;
        } else {
            // NaN inside the bracket: settle for the middle of what is known.
            break;
        }
    }
    (0.5 * (s_lo + s_hi)).exp()
}
