//! Fonts and text: the embedded DejaVu Sans, text measurement, SVG text and PNG
//! rasterisation, wrapping, and the centred header lines (title, subtitle, notes).

use std::sync::OnceLock;

use ab_glyph::{point, Font, FontRef, PxScale, ScaleFont};
use plotters::backend::DrawingBackend;
use plotters::coord::Shift;
use plotters::drawing::DrawingArea;
use plotters::element::Text;
use plotters::style::text_anchor::{HPos, Pos, VPos};
use plotters::style::{
    register_font, Color, FontDesc, FontFamily, FontStyle, FontTransform, RGBColor,
};

use super::style::{MUTED, NOTE, TEXT};
use super::{Px, DEFAULT_HEIGHT, DEFAULT_WIDTH};

/// The font family name under which the embedded font is registered.
pub(super) const FAMILY: &str = "DejaVu Sans";

pub(super) static FONT_BYTES: &[u8] = include_bytes!("../../assets/fonts/DejaVuSans.ttf");

pub(super) static FONT_READY: OnceLock<Result<(), String>> = OnceLock::new();

pub(super) static FONT_FACE: OnceLock<Option<FontRef<'static>>> = OnceLock::new();

pub(super) fn ensure_font() -> Result<(), String> {
    FONT_READY
        .get_or_init(|| {
            register_font(FAMILY, FontStyle::Normal, FONT_BYTES)
                .map_err(|_| "the embedded DejaVu Sans font could not be loaded".to_string())
        })
        .clone()
}

pub(super) fn dr<E: std::fmt::Display>(e: E) -> String {
    e.to_string()
}

pub(super) fn font(size: f64) -> FontDesc<'static> {
    FontDesc::new(FontFamily::Name(FAMILY), size, FontStyle::Normal)
}

/// The embedded font, parsed once.
pub(super) fn face() -> Option<&'static FontRef<'static>> {
    FONT_FACE
        .get_or_init(|| FontRef::try_from_slice(FONT_BYTES).ok())
        .as_ref()
}

/// How text reaches the picture: as `<text>` elements (SVG) or as pixels
/// rasterised here from the embedded font (PNG).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(super) enum Ink {
    Vector,
    Raster,
}

/// The look and anchoring of one piece of text; `em` is the font size in
/// pixels (the SVG `font-size`).
#[derive(Clone, Copy)]
pub(super) struct Label {
    pub(super) em: f64,
    pub(super) color: RGBColor,
    pub(super) h: HPos,
    pub(super) v: VPos,
    pub(super) vertical: bool,
}

pub(super) fn label(em: f64, color: RGBColor, h: HPos, v: VPos) -> Label {
    Label {
        em,
        color,
        h,
        v,
        vertical: false,
    }
}

/// Ratio of plotters' font size to the SVG `font-size` it writes.
pub(super) const PLOTTERS_SIZE_PER_EM: f64 = 1.24;

/// The ab_glyph scale giving an em of `em` pixels.
pub(super) fn px_scale(font: &FontRef<'static>, em: f64) -> PxScale {
    let per_em = font.units_per_em().unwrap_or(2048.0);
    let height = font.height_unscaled();
    PxScale::from((em * f64::from(height / per_em)) as f32)
}

/// Width of `text` in pixels at `em`, and its nominal height (one em).
pub(super) fn text_size(em: f64, text: &str) -> (i32, i32) {
    let h = em.round() as i32;
    let Some(f) = face() else {
        return ((text.chars().count() as f64 * em * 0.6) as i32, h);
    };
    let scaled = f.as_scaled(px_scale(f, em));
    let mut width = 0f32;
    let mut prev = None;
    for ch in text.chars() {
        let id = scaled.glyph_id(ch);
        if let Some(p) = prev {
            width += scaled.kern(p, id);
        }
        width += scaled.h_advance(id);
        prev = Some(id);
    }
    (width.ceil() as i32, h)
}

/// Offsets (along the text, across it) from the anchor to the start of the
/// baseline, the same as the SVG backend's `text-anchor` and `dy`.
pub(super) fn anchor_offsets(l: &Label, width: f64) -> (f64, f64) {
    let du = match l.h {
        HPos::Left => 0.0,
        HPos::Center => -width / 2.0,
        HPos::Right => -width,
    };
    let dv = match l.v {
        VPos::Top => 0.76 * l.em,
        VPos::Center => 0.27 * l.em,
        VPos::Bottom => -0.27 * l.em,
    };
    (du.round(), dv.round())
}

/// Draws `text` anchored at `at`.
pub(super) fn put_text<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    ink: Ink,
    text: &str,
    at: Px,
    l: Label,
) -> Result<(), String> {
    if text.is_empty() {
        return Ok(());
    }
    match ink {
        Ink::Vector => {
            let mut st = font(l.em * PLOTTERS_SIZE_PER_EM)
                .color(&l.color)
                .pos(Pos::new(l.h, l.v));
            if l.vertical {
                st = st.transform(FontTransform::Rotate270);
            }
            root.draw(&Text::new(text.to_string(), at, st)).map_err(dr)
        }
        Ink::Raster => raster_text(root, text, at, l),
    }
}

/// Rasterises `text` with the embedded font, glyph by glyph with kerning and
/// side bearings, blending coverage into the picture.
pub(super) fn raster_text<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    text: &str,
    at: Px,
    l: Label,
) -> Result<(), String> {
    let f =
        face().ok_or_else(|| "the embedded DejaVu Sans font could not be loaded".to_string())?;
    let scale = px_scale(f, l.em);
    let scaled = f.as_scaled(scale);
    let mut glyphs = Vec::new();
    let mut pen = 0f32;
    let mut prev = None;
    for ch in text.chars() {
        let id = scaled.glyph_id(ch);
        if let Some(p) = prev {
            pen += scaled.kern(p, id);
        }
        glyphs.push(id.with_scale_and_position(scale, point(pen, 0.0)));
        pen += scaled.h_advance(id);
        prev = Some(id);
    }
    let (du, dv) = anchor_offsets(&l, f64::from(pen));
    let (du, dv) = (du as i32, dv as i32);
    let mut failure = None;
    for g in glyphs {
        let Some(outline) = f.outline_glyph(g) else {
            continue;
        };
        let b = outline.px_bounds();
        let (bx, by) = (b.min.x as i32, b.min.y as i32);
        outline.draw(|gx, gy, coverage| {
            if coverage < 0.02 || failure.is_some() {
                return;
            }
            let u = bx + gx as i32 + du;
            let v = by + gy as i32 + dv;
            let pixel = if l.vertical {
                (at.0 + v, at.1 - u)
            } else {
                (at.0 + u, at.1 + v)
            };
            let color = l.color.mix(f64::from(coverage.min(1.0)));
            if let Err(e) = root.draw_pixel(pixel, &color) {
                failure = Some(e.to_string());
            }
        });
    }
    failure.map_or(Ok(()), Err)
}

/// Splits `text` into lines no wider than `max_w` pixels, at spaces; a word wider than
/// that on its own is broken between characters. Nothing is ever cut off.
pub(super) fn wrap(text: &str, size: f64, max_w: i32) -> Vec<String> {
    let mut lines = Vec::new();
    for paragraph in text.lines() {
        let mut current = String::new();
        for word in paragraph.split_whitespace() {
            let candidate = if current.is_empty() {
                word.to_string()
            } else {
                format!("{current} {word}")
            };
            if text_size(size, &candidate).0 <= max_w {
                current = candidate;
                continue;
            }
            if !current.is_empty() {
                lines.push(std::mem::take(&mut current));
            }
            // The word alone: break it where it overflows.
            for ch in word.chars() {
                current.push(ch);
                if current.chars().count() > 1 && text_size(size, &current).0 > max_w {
                    current.pop();
                    lines.push(std::mem::replace(&mut current, ch.to_string()));
                }
            }
        }
        if !current.is_empty() {
            lines.push(current);
        }
    }
    lines
}

pub(super) struct HeaderLine {
    pub(super) text: String,
    pub(super) size: f64,
    pub(super) color: RGBColor,
}

/// Draws centred header lines from the top; returns the height used.
pub(super) fn draw_header<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    ink: Ink,
    lines: &[HeaderLine],
    top: i32,
    width: i32,
) -> Result<i32, String> {
    let mut y = top;
    for line in lines {
        let l = label(line.size, line.color, HPos::Center, VPos::Top);
        put_text(root, ink, &line.text, (width / 2, y), l)?;
        y += (line.size * 1.4).round() as i32;
    }
    Ok(y)
}

pub(super) fn header_lines(
    title: &str,
    subtitle: Option<&str>,
    notes: &[String],
    width: i32,
    s: f64,
) -> Vec<HeaderLine> {
    let notes: Vec<(String, RGBColor)> = notes.iter().map(|n| (n.clone(), NOTE)).collect();
    header_lines_with(title, subtitle, &notes, width, s)
}

/// The title, subtitle and notes (each `Note: ...` in its colour), wrapped to the width.
pub(super) fn header_lines_with(
    title: &str,
    subtitle: Option<&str>,
    notes: &[(String, RGBColor)],
    width: i32,
    s: f64,
) -> Vec<HeaderLine> {
    let max_w = width - (40.0 * s) as i32;
    let mut lines = Vec::new();
    for text in wrap(title, 23.0 * s, max_w) {
        lines.push(HeaderLine {
            text,
            size: 23.0 * s,
            color: TEXT,
        });
    }
    if let Some(sub) = subtitle {
        for text in wrap(sub, 16.5 * s, max_w) {
            lines.push(HeaderLine {
                text,
                size: 16.5 * s,
                color: MUTED,
            });
        }
    }
    for (note, color) in notes {
        for text in wrap(&format!("Note: {note}"), 15.0 * s, max_w) {
            lines.push(HeaderLine {
                text,
                size: 15.0 * s,
                color: *color,
            });
        }
    }
    lines
}

/// Footnotes, each wrapped to the width (never cut); the first line of each starts
/// with a bullet.
pub(super) fn footer_lines(notes: &[String], width: i32, s: f64) -> Vec<HeaderLine> {
    let size = 13.5 * s;
    let max_w = width - (40.0 * s) as i32;
    let mut lines = Vec::new();
    for note in notes {
        for (k, text) in wrap(note, size, max_w - (14.0 * s) as i32)
            .into_iter()
            .enumerate()
        {
            lines.push(HeaderLine {
                text: if k == 0 {
                    format!("• {text}")
                } else {
                    format!("   {text}")
                },
                size,
                color: MUTED,
            });
        }
    }
    lines
}

/// Draws footnote lines left-aligned at `left`, from `top` down.
pub(super) fn draw_footer<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    ink: Ink,
    lines: &[HeaderLine],
    top: i32,
    left: i32,
) -> Result<(), String> {
    let mut y = top;
    for line in lines {
        let l = label(line.size, line.color, HPos::Left, VPos::Top);
        put_text(root, ink, &line.text, (left, y), l)?;
        y += (line.size * 1.35).round() as i32;
    }
    Ok(())
}

/// How much larger than at 1000 x 650 pixels text and strokes are drawn.
pub(super) fn scale_factor(width: u32, height: u32) -> f64 {
    let rw = f64::from(width) / f64::from(DEFAULT_WIDTH);
    let rh = f64::from(height) / f64::from(DEFAULT_HEIGHT);
    (rw * rh).sqrt().min(1.3 * rw.min(rh)).clamp(0.75, 4.0)
}

pub(super) fn plural(n: usize, one: &str, many: &str) -> String {
    if n == 1 {
        format!("1 {one}")
    } else {
        format!("{n} {many}")
    }
}
