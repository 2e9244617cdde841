//! Tick positions and labels: round linear steps, powers of ten or two on log axes
//! (with 1-2-5 steps inside a decade), the densest ticks whose labels fit, and padded
//! ranges.

use super::text::text_size;
use super::Scale;

/// Tick positions in plot space (the logarithm for log axes) with labels, and
/// unlabelled minor grid positions.
#[derive(Debug, Clone, Default, PartialEq)]
pub(super) struct Ticks {
    pub(super) bold: Vec<(f64, String)>,
    pub(super) light: Vec<f64>,
}

pub(super) fn to_plot(scale: Scale, v: f64) -> Option<f64> {
    if !v.is_finite() {
        return None;
    }
    match scale {
        Scale::Linear => Some(v),
        Scale::Log10 if v > 0.0 => Some(v.log10()),
        Scale::Log2 if v > 0.0 => Some(v.log2()),
        _ => None,
    }
}

pub(super) fn nice_step(span: f64, max_ticks: usize) -> f64 {
    let raw = span / max_ticks.max(1) as f64;
    if !(raw.is_finite() && raw > 0.0) {
        return 1.0;
    }
    let mag = 10f64.powf(raw.log10().floor());
    for m in [1.0, 2.0, 5.0] {
        if m * mag >= raw * (1.0 - 1e-9) {
            return m * mag;
        }
    }
    10.0 * mag
}

/// Nice round tick values within `[lo, hi]` and their spacing.
pub(super) fn linear_values(lo: f64, hi: f64, max_ticks: usize) -> (Vec<f64>, f64) {
    let step = nice_step(hi - lo, max_ticks);
    let k0 = (lo / step - 1e-9).ceil();
    let k1 = (hi / step + 1e-9).floor();
    if !(k0.is_finite() && k1.is_finite()) || k1 < k0 || k1 - k0 > 1000.0 || k0.abs() > 1e15 {
        return (Vec::new(), step);
    }
    let values = (0..=(k1 - k0) as i64)
        .map(|i| (k0 + i as f64) * step)
        .collect();
    (values, step)
}

pub(super) fn trim_mantissa(text: &str) -> String {
    match text.split_once('e') {
        Some((m, e)) if m.contains('.') => {
            let m = m.trim_end_matches('0').trim_end_matches('.');
            format!("{m}e{e}")
        }
        _ => text.to_string(),
    }
}

/// Formats a linear tick value with as many decimals as its spacing needs.
pub(super) fn format_linear(v: f64, step: f64) -> String {
    let v = if v.abs() < step.abs() * 1e-6 { 0.0 } else { v };
    let mag = v.abs();
    let step_exp = step.abs().log10().floor();
    if mag >= 1e6 || (mag > 0.0 && mag < 1e-4) {
        let digits = (mag.log10().floor() - step_exp).clamp(0.0, 12.0) as usize;
        trim_mantissa(&format!("{v:.digits$e}"))
    } else {
        let decimals = (-step_exp).clamp(0.0, 12.0) as usize;
        format!("{v:.decimals$}")
    }
}

pub(super) fn superscript(e: i64) -> String {
    e.to_string()
        .chars()
        .map(|c| match c {
            '-' => '⁻',
            '0' => '⁰',
            '1' => '¹',
            '2' => '²',
            '3' => '³',
            '4' => '⁴',
            '5' => '⁵',
            '6' => '⁶',
            '7' => '⁷',
            '8' => '⁸',
            _ => '⁹',
        })
        .collect()
}

/// Whether powers `base^e` for `e` in `e0..=e1` all read well as plain numbers.
pub(super) fn plain_powers(base: f64, e0: i64, e1: i64) -> bool {
    if base == 2.0 {
        e0 >= -4 && e1 <= 16
    } else {
        e0 >= -3 && e1 <= 5
    }
}

pub(super) fn power_label(base: f64, e: i64, plain: bool) -> String {
    match (base == 2.0, plain) {
        (true, true) if e >= 0 => format!("{}", 1i64 << e.min(62)),
        (true, true) => format!("{}", 2f64.powi(e as i32)),
        (true, false) => format!("2{}", superscript(e)),
        (false, _) => mantissa_label(1, e, plain),
    }
}

pub(super) fn mantissa_label(m: i64, e: i64, plain: bool) -> String {
    if plain && (0..=15).contains(&e) {
        format!("{}", m * 10i64.pow(e as u32))
    } else if plain && e < 0 {
        let decimals = (-e).min(20) as usize;
        format!("{:.decimals$}", m as f64 * 10f64.powi(e as i32))
    } else if m == 1 {
        format!("10{}", superscript(e))
    } else {
        format!("{m}×10{}", superscript(e))
    }
}

/// Ticks of a log axis whose plot-space range is `[lo, hi]` (exponents).
pub(super) fn log_ticks(base: f64, lo: f64, hi: f64, max_ticks: usize) -> Ticks {
    if !(lo.is_finite() && hi.is_finite()) || hi <= lo || hi - lo > 4000.0 {
        return Ticks::default();
    }
    let e0 = (lo - 1e-9).ceil() as i64;
    let e1 = (hi + 1e-9).floor() as i64;
    let n = e1 - e0 + 1;
    if n < 2 {
        // Less than two powers in range: 1-2-5 steps if there are enough,
        // else round numbers of the data space.
        if base == 10.0 {
            let bold: Vec<(f64, String)> = ((e0 - 2)..=(e1 + 1))
                .flat_map(|e| [1i64, 2, 5].map(|m| (e, m)))
                .map(|(e, m)| (e as f64 + (m as f64).log10(), e, m))
                .filter(|(v, _, _)| *v >= lo - 1e-12 && *v <= hi + 1e-12)
                .map(|(v, e, m)| (v, mantissa_label(m, e, (-3..=5).contains(&e))))
                .collect();
            if bold.len() >= 3 {
                return Ticks {
                    bold,
                    light: Vec::new(),
                };
            }
        }
        let (values, step) = linear_values(base.powf(lo), base.powf(hi), max_ticks.min(6));
        let bold = values
            .into_iter()
            .filter(|v| *v > 0.0)
            .map(|v| (v.log(base), format_linear(v, step)))
            .collect();
        return Ticks {
            bold,
            light: Vec::new(),
        };
    }
    let step = ((n as f64) / max_ticks.max(2) as f64).ceil().max(1.0) as i64;
    let exps: Vec<i64> = (e0..=e1).filter(|e| e.rem_euclid(step) == 0).collect();
    let plain = plain_powers(
        base,
        exps.first().copied().unwrap_or(e0),
        exps.last().copied().unwrap_or(e1),
    );
    let mut bold: Vec<(f64, String)> = exps
        .iter()
        .map(|&e| (e as f64, power_label(base, e, plain)))
        .collect();
    let mut light: Vec<f64> = (e0..=e1)
        .filter(|e| e.rem_euclid(step) != 0)
        .map(|e| e as f64)
        .collect();
    if base == 10.0 {
        let within = |v: f64| v >= lo - 1e-12 && v <= hi + 1e-12;
        if n <= 2 && max_ticks >= 6 {
            for e in (e0 - 1)..=e1 {
                for m in [2i64, 5] {
                    let v = e as f64 + (m as f64).log10();
                    if within(v) {
                        bold.push((v, mantissa_label(m, e, plain)));
                    }
                }
            }
            bold.sort_by(|a, b| a.0.total_cmp(&b.0));
        }
        if hi - lo <= 5.0 && step == 1 {
            for e in (e0 - 1)..=e1 {
                for m in 2..=9 {
                    let v = e as f64 + f64::from(m).log10();
                    if within(v) && !bold.iter().any(|(b, _)| (b - v).abs() < 1e-9) {
                        light.push(v);
                    }
                }
            }
        }
    }
    Ticks { bold, light }
}

#[cfg(test)]
pub(super) fn axis_ticks(scale: Scale, lo: f64, hi: f64, max_ticks: usize) -> Ticks {
    axis_ticks_for(scale, false, lo, hi, max_ticks)
}

/// Ticks of an axis whose plot-space range is `[lo, hi]`; on an `integer` axis (the data
/// are whole numbers) every labelled tick is a whole number and the minor grid lines sit
/// at whole numbers too.
pub(super) fn axis_ticks_for(
    scale: Scale,
    integer: bool,
    lo: f64,
    hi: f64,
    max_ticks: usize,
) -> Ticks {
    match scale {
        Scale::Linear => {
            let (values, step) = if integer {
                integer_values(lo, hi, max_ticks)
            } else {
                linear_values(lo, hi, max_ticks)
            };
            let bold: Vec<(f64, String)> = values
                .iter()
                .map(|v| (*v, format_linear(*v, step)))
                .collect();
            let light = values
                .windows(2)
                .map(|w| (w[0] + w[1]) / 2.0)
                .filter(|v| !integer || v.fract() == 0.0)
                .collect::<Vec<_>>();
            Ticks { bold, light }
        }
        Scale::Log10 | Scale::Log2 => {
            let base = if scale == Scale::Log10 { 10.0 } else { 2.0 };
            let mut ticks = log_ticks(base, lo, hi, max_ticks);
            if integer {
                let whole = |v: f64| {
                    let x = base.powf(v);
                    x >= 1.0 - 1e-9 && (x - x.round()).abs() <= 1e-9 * x.max(1.0)
                };
                ticks.bold.retain(|(v, _)| whole(*v));
                ticks.light.retain(|v| whole(*v));
            }
            ticks
        }
    }
}

/// Whole-number tick values within `[lo, hi]` (a step of at least 1) and their spacing.
fn integer_values(lo: f64, hi: f64, max_ticks: usize) -> (Vec<f64>, f64) {
    let step = nice_step(hi - lo, max_ticks).max(1.0).round();
    let k0 = (lo / step - 1e-9).ceil();
    let k1 = (hi / step + 1e-9).floor();
    if !(k0.is_finite() && k1.is_finite()) || k1 < k0 || k1 - k0 > 1000.0 || k0.abs() > 1e15 {
        return (Vec::new(), step);
    }
    let values = (0..=(k1 - k0) as i64)
        .map(|i| (k0 + i as f64) * step)
        .collect();
    (values, step)
}

/// The densest ticks whose labels do not collide along an axis of `len_px`
/// pixels (labels side by side when `horizontal`, stacked otherwise).
pub(super) fn fit_ticks(
    scale: Scale,
    integer: bool,
    lo: f64,
    hi: f64,
    len_px: f64,
    horizontal: bool,
    label_size: f64,
) -> Ticks {
    let mut last = Ticks::default();
    for max_ticks in (2..=10).rev() {
        let ticks = axis_ticks_for(scale, integer, lo, hi, max_ticks);
        let pos = |v: f64| (v - lo) / (hi - lo) * len_px;
        let fits = ticks.bold.windows(2).all(|w| {
            let gap = (pos(w[1].0) - pos(w[0].0)).abs();
            let (wa, ha) = text_size(label_size, &w[0].1);
            let (wb, hb) = text_size(label_size, &w[1].1);
            if horizontal {
                gap >= f64::from(wa + wb) / 2.0 + label_size * 0.8
            } else {
                gap >= f64::from(ha.max(hb)) * 1.5
            }
        });
        if fits && !ticks.bold.is_empty() {
            return ticks;
        }
        if !ticks.bold.is_empty() || last.bold.is_empty() {
            last = ticks;
        }
    }
    last
}

/// Pads a plot-space range; a degenerate range (one value) gets a fixed width.
pub(super) fn padded_range(values: &[f64], scale: Scale) -> (f64, f64) {
    let lo = values.iter().copied().fold(f64::INFINITY, f64::min);
    let hi = values.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    if !(lo.is_finite() && hi.is_finite()) {
        return (0.0, 1.0);
    }
    let magnitude = lo.abs().max(hi.abs());
    if hi - lo <= magnitude * 1e-9 || hi - lo < 1e-300 {
        let c = (lo + hi) / 2.0;
        let d = match scale {
            Scale::Linear if c == 0.0 => 1.0,
            Scale::Linear => c.abs() * 0.1,
            Scale::Log10 => 0.5,
            Scale::Log2 => 1.0,
        };
        return (c - d, c + d);
    }
    let pad = (hi - lo) * 0.05;
    (lo - pad, hi + pad)
}
