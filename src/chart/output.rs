//! Output files: the SVG, PNG and CSV paths of a stem, size checks, and painting one
//! picture to both image formats.

use std::ffi::OsString;
use std::path::{Path, PathBuf};

use plotters::backend::{BitMapBackend, DrawingBackend, SVGBackend};
use plotters::coord::Shift;
use plotters::drawing::{DrawingArea, IntoDrawingArea};

use super::text::Ink;
use super::{ChartFiles, MAX_SIDE, MIN_HEIGHT, MIN_WIDTH};
use crate::error::Error;

pub(super) fn check_size(width: u32, height: u32, stem: &Path) -> Result<(), Error> {
    if !(MIN_WIDTH..=MAX_SIDE).contains(&width) || !(MIN_HEIGHT..=MAX_SIDE).contains(&height) {
        return Err(Error::Chart {
            path: stem.to_path_buf(),
            reason: format!(
                "image size {width}x{height} is outside {MIN_WIDTH}..={MAX_SIDE} by \
                 {MIN_HEIGHT}..={MAX_SIDE} pixels"
            ),
        });
    }
    Ok(())
}

pub(super) fn with_suffix(stem: &Path, suffix: &str) -> PathBuf {
    let mut name: OsString = stem.as_os_str().to_owned();
    name.push(".");
    name.push(suffix);
    PathBuf::from(name)
}

pub(super) fn output_files(stem: &Path) -> Result<ChartFiles, Error> {
    if stem.file_name().is_none() {
        return Err(Error::Chart {
            path: stem.to_path_buf(),
            reason: "the output stem must name a file, e.g. out/queries".into(),
        });
    }
    if let Some(parent) = stem.parent() {
        if !parent.as_os_str().is_empty() {
            std::fs::create_dir_all(parent).map_err(|source| Error::Io {
                action: "cannot create directory",
                path: parent.to_path_buf(),
                source,
            })?;
        }
    }
    Ok(ChartFiles {
        svg: with_suffix(stem, "svg"),
        png: with_suffix(stem, "png"),
        csv: with_suffix(stem, "csv"),
        notes: Vec::new(),
    })
}

pub(super) fn write_file(path: &Path, contents: impl AsRef<[u8]>) -> Result<(), Error> {
    std::fs::write(path, contents).map_err(|source| Error::Io {
        action: "cannot write",
        path: path.to_path_buf(),
        source,
    })
}

/// Something that paints a whole picture on any plotters backend.
pub(super) trait Painter {
    fn paint<DB: DrawingBackend>(
        &self,
        root: &DrawingArea<DB, Shift>,
        ink: Ink,
    ) -> Result<(), String>;
}

pub(super) fn write_images<P: Painter>(
    painter: &P,
    files: &ChartFiles,
    width: u32,
    height: u32,
) -> Result<(), Error> {
    let svg_err = |reason: String| Error::Chart {
        path: files.svg.clone(),
        reason,
    };
    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, (width, height)).into_drawing_area();
        painter.paint(&root, Ink::Vector).map_err(svg_err)?;
        root.present().map_err(|e| svg_err(e.to_string()))?;
    }
    write_file(&files.svg, &svg)?;

    let png_err = |reason: String| Error::Chart {
        path: files.png.clone(),
        reason,
    };
    // Painted into memory and encoded here, so that a file that cannot be written is an
    // I/O error with its cause (exit code 4), as for the SVG and CSV files.
    let mut pixels = vec![0u8; width as usize * height as usize * 3];
    {
        let root = BitMapBackend::with_buffer(&mut pixels, (width, height)).into_drawing_area();
        painter.paint(&root, Ink::Raster).map_err(png_err)?;
        root.present().map_err(|e| png_err(e.to_string()))?;
    }
    let mut encoded = Vec::new();
    {
        let mut encoder = png::Encoder::new(&mut encoded, width, height);
        encoder.set_color(png::ColorType::Rgb);
        encoder.set_depth(png::BitDepth::Eight);
        encoder
            .write_header()
            .and_then(|mut w| w.write_image_data(&pixels))
            .map_err(|e| png_err(e.to_string()))?;
    }
    write_file(&files.png, &encoded)
}
