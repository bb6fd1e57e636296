//! Rendering one figure into memory: the bundled font (no system fonts), the SVG document (the
//! report embeds it from there) and the PNG encoded from a pixel buffer. Nothing here writes a
//! file: a figure is two named outputs that the output policy writes with the rest of a set.

use std::sync::Once;

use plotters::prelude::*;

use crate::output::Produced;

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
    Output(#[from] crate::output::OutputError),
}

/// A rendered figure, in memory: its name (the file stem), the SVG document and the PNG bytes.
#[derive(Debug, Clone)]
pub struct Figure {
    /// The figure's name (its files' stem).
    pub name: String,
    /// The SVG document.
    pub svg: String,
    /// The PNG file's bytes.
    pub png: Vec<u8>,
}

impl Figure {
    /// Its two files, PNG then SVG, as outputs.
    pub fn files(&self) -> [Produced; 2] {
        self.files_named(&self.name)
    }

    /// Its two files under the stem `name`.
    pub fn files_named(&self, name: &str) -> [Produced; 2] {
        [
            Produced::new(format!("{name}.png"), self.png.clone()),
            Produced::new(format!("{name}.svg"), self.svg.as_bytes()),
        ]
    }

    /// The `<svg>` element alone, for embedding in a page.
    pub fn svg_element(&self) -> &str {
        self.svg.find("<svg").map(|i| &self.svg[i..]).unwrap_or("")
    }
}

/// Render `$draw` (an expression using the drawing area `$area`) as the figure `$name`, SVG and
/// PNG in memory; evaluates to a `Result<Figure, PlotError>`.
macro_rules! render_figure {
    ($name:expr, |$area:ident| $draw:expr) => {{
        $crate::plots::figure::render(
            $name,
            |svg: &mut String| {
                let $area = plotters::prelude::IntoDrawingArea::into_drawing_area(
                    plotters::prelude::SVGBackend::with_string(svg, $crate::plots::figure::SIZE),
                );
                let r = $draw;
                drop($area);
                r
            },
            |pixels: &mut [u8]| {
                let $area = plotters::prelude::IntoDrawingArea::into_drawing_area(
                    plotters::prelude::BitMapBackend::with_buffer(
                        pixels,
                        $crate::plots::figure::SIZE,
                    ),
                );
                let r = $draw;
                drop($area);
                r
            },
        )
    }};
}
pub(crate) use render_figure;

/// Draw the SVG into a string and the PNG into an RGB buffer, then encode the PNG.
pub fn render(
    name: &str,
    draw_svg: impl FnOnce(&mut String) -> Result<(), String>,
    draw_png: impl FnOnce(&mut [u8]) -> Result<(), String>,
) -> Result<Figure, PlotError> {
    ensure_font();
    let failed = |ext: &str| {
        let path = format!("{name}.{ext}");
        move |reason| PlotError::Draw { path, reason }
    };
    let mut svg = String::new();
    draw_svg(&mut svg).map_err(failed("svg"))?;
    let (w, h) = SIZE;
    let mut pixels = vec![255u8; (w * h * 3) as usize];
    draw_png(&mut pixels).map_err(failed("png"))?;
    let png = encode_png(&pixels, w, h).map_err(failed("png"))?;
    Ok(Figure {
        name: name.into(),
        svg,
        png,
    })
}

/// An RGB pixel buffer as a PNG file's bytes.
fn encode_png(pixels: &[u8], w: u32, h: u32) -> Result<Vec<u8>, String> {
    use image::ImageEncoder as _;
    let mut png = Vec::new();
    image::codecs::png::PngEncoder::new(&mut png)
        .write_image(pixels, w, h, image::ColorType::Rgb8)
        .map_err(|e| e.to_string())?;
    Ok(png)
}
