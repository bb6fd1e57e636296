//! Rendering one figure: the bundled font (no system fonts), the SVG drawn into memory (the
//! report embeds it from there) and written out, the PNG drawn to a temporary file and renamed
//! into place — both through the output policy.

use std::path::{Path, PathBuf};
use std::sync::Once;

use plotters::prelude::*;

use crate::output::{self, OutputError};

/// Pixel size of every plot.
pub const SIZE: (u32, u32) = (1100, 700);

static FONT: Once = Once::new();

/// Register the bundled DejaVu Sans as "sans-serif" (once).
pub fn ensure_font() {
    FONT.call_once(|| {
        let _ = plotters::style::register_font(
            "sans-serif",
            FontStyle::Normal,
            dejavu::sans::regular(),
        );
        let _ = plotters::style::register_font("sans-serif", FontStyle::Bold, dejavu::sans::bold());
    });
}

/// A plot could not be drawn or written.
#[derive(Debug, thiserror::Error)]
pub enum PlotError {
    /// Drawing failed.
    #[error("plotting {path}: {reason}")]
    Draw {
        /// The figure.
        path: String,
        /// Why.
        reason: String,
    },
    /// Writing failed, or a file is already there.
    #[error(transparent)]
    Output(#[from] OutputError),
}

/// A rendered figure: its two files and the SVG text.
#[derive(Debug, Clone)]
pub struct Figure {
    /// The figure's name (its file stem).
    pub name: String,
    /// The PNG file.
    pub png: PathBuf,
    /// The SVG file.
    pub svg_path: PathBuf,
    /// The SVG document.
    pub svg: String,
}

impl Figure {
    /// Both files.
    pub fn files(&self) -> [PathBuf; 2] {
        [self.png.clone(), self.svg_path.clone()]
    }

    /// The `<svg>` element alone, for embedding in a page.
    pub fn svg_element(&self) -> &str {
        self.svg.find("<svg").map(|i| &self.svg[i..]).unwrap_or("")
    }
}

/// Render `$draw` (an expression using the drawing area `$area`) as the figure `$stem`.png
/// and .svg (refused where they exist unless `$force`); evaluates to a `Result<Figure, _>`.
macro_rules! render_figure {
    ($stem:expr, $force:expr, |$area:ident| $draw:expr) => {{
        $crate::plots::figure::render(
            $stem,
            $force,
            |svg: &mut String| {
                let $area = plotters::prelude::IntoDrawingArea::into_drawing_area(
                    plotters::prelude::SVGBackend::with_string(svg, $crate::plots::figure::SIZE),
                );
                let r = $draw;
                drop($area);
                r
            },
            |png: &std::path::Path| {
                let $area = plotters::prelude::IntoDrawingArea::into_drawing_area(
                    plotters::prelude::BitMapBackend::new(png, $crate::plots::figure::SIZE),
                );
                $draw
            },
        )
    }};
}
pub(crate) use render_figure;

/// Draw the SVG into memory and write it, then the PNG through a temporary file.
pub fn render(
    stem: &Path,
    force: bool,
    draw_svg: impl FnOnce(&mut String) -> Result<(), String>,
    draw_png: impl FnOnce(&Path) -> Result<(), String>,
) -> Result<Figure, PlotError> {
    ensure_font();
    let png = stem.with_extension("png");
    let svg_path = stem.with_extension("svg");
    output::refuse_existing([png.clone(), svg_path.clone()], force)?;
    let mut svg = String::new();
    draw_svg(&mut svg).map_err(|reason| PlotError::Draw {
        path: svg_path.display().to_string(),
        reason,
    })?;
    output::write(&svg_path, svg.as_bytes(), force)?;
    output::write_with(&png, force, draw_png)?;
    Ok(Figure {
        name: stem
            .file_stem()
            .map(|n| n.to_string_lossy().into_owned())
            .unwrap_or_default(),
        png,
        svg_path,
        svg,
    })
}
