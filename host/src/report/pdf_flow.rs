//! A small page-flow layer over the PDF writer: text in the bundled font, wrapped to a width,
//! rules, images, and blocks that move to a new page whole rather than split.

use printpdf::{
    Color, FontId, Line, LinePoint, Mm, Op, ParsedFont, PdfDocument, PdfFontHandle, PdfPage,
    PdfSaveOptions, Point, Pt, RawImage, Rgb, TextItem, XObjectTransform,
};

/// Paper sizes, mm.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Paper {
    /// ISO A4, 210 × 297 mm.
    #[default]
    A4,
    /// US Letter, 8.5 × 11 in.
    Letter,
}

impl Paper {
    /// Width and height, mm.
    pub fn size_mm(self) -> (f32, f32) {
        match self {
            Paper::A4 => (210.0, 297.0),
            Paper::Letter => (215.9, 279.4),
        }
    }
}

/// Margin on every side, mm.
pub const MARGIN_MM: f32 = 18.0;
/// An average glyph's advance in the bundled sans font, as a fraction of its size (for
/// wrapping; DejaVu Sans runs a little wider than most).
const ADVANCE: f32 = 0.56;
const PT_PER_MM: f32 = 72.0 / 25.4;

/// Pages being laid out top-down.
pub struct Flow {
    doc: PdfDocument,
    font: FontId,
    bold: FontId,
    paper: Paper,
    pages: Vec<Vec<Op>>,
    /// The cursor: distance from the page's top, mm.
    y_mm: f32,
}

impl Flow {
    /// A new document titled `title` on `paper`, dated `created_unix_s` (seconds since 1970,
    /// UTC: the record it reports, so the same record gives the same bytes).
    pub fn new(title: &str, paper: Paper, created_unix_s: i64) -> Result<Flow, String> {
        let mut doc = PdfDocument::new(title);
        let date = printpdf::OffsetDateTime::from_unix_timestamp(created_unix_s)
            .map_err(|e| format!("the certificate's date: {e}"))?;
        let info = &mut doc.metadata.info;
        info.creation_date = date;
        info.modification_date = date;
        info.metadata_date = date;
        let mut warnings = Vec::new();
        let regular = ParsedFont::from_bytes(dejavu::sans::regular(), 0, &mut warnings)
            .ok_or("the bundled font could not be read")?;
        let bold = ParsedFont::from_bytes(dejavu::sans::bold(), 0, &mut warnings)
            .ok_or("the bundled bold font could not be read")?;
        let font = doc.add_font(&regular);
        let bold = doc.add_font(&bold);
        Ok(Flow {
            doc,
            font,
            bold,
            paper,
            pages: vec![Vec::new()],
            y_mm: MARGIN_MM,
        })
    }

    /// The width between the margins, mm.
    pub fn width_mm(&self) -> f32 {
        self.paper.size_mm().0 - 2.0 * MARGIN_MM
    }

    fn room_mm(&self) -> f32 {
        self.paper.size_mm().1 - MARGIN_MM - 12.0 - self.y_mm
    }

    /// Start a new page unless `height_mm` still fits on this one (a block is never split).
    pub fn keep_together(&mut self, height_mm: f32) {
        if height_mm > self.room_mm() && self.y_mm > MARGIN_MM + 1.0 {
            self.pages.push(Vec::new());
            self.y_mm = MARGIN_MM;
        }
    }

    /// Move down by `mm`.
    pub fn skip(&mut self, mm: f32) {
        self.y_mm += mm;
    }

    fn ops(&mut self) -> &mut Vec<Op> {
        self.pages.last_mut().expect("one page at least")
    }

    fn baseline(&self, y_top_mm: f32) -> f32 {
        self.paper.size_mm().1 - y_top_mm
    }

    /// One line of text at `x_mm` from the margin, `size` pt, on the current line.
    pub fn text_at(&mut self, x_mm: f32, size: f32, bold: bool, text: &str) {
        let font = if bold {
            self.bold.clone()
        } else {
            self.font.clone()
        };
        let y = self.baseline(self.y_mm + size / PT_PER_MM);
        let x = MARGIN_MM + x_mm;
        self.ops().extend([
            Op::StartTextSection,
            Op::SetFont {
                font: PdfFontHandle::External(font),
                size: Pt(size),
            },
            Op::SetTextCursor {
                pos: Point::new(Mm(x), Mm(y)),
            },
            Op::ShowText {
                items: vec![TextItem::Text(text.to_string())],
            },
            Op::EndTextSection,
        ]);
    }

    /// Lines of `text` wrapped to `width_mm` at `size` pt.
    pub fn wrap(text: &str, width_mm: f32, size: f32) -> Vec<String> {
        let per_line = ((width_mm * PT_PER_MM) / (size * ADVANCE)).max(8.0) as usize;
        crate::units::wrap_words(text, per_line)
    }

    /// At most how wide `text` in bold capitals at `size` pt is, mm (the bundled DejaVu Sans
    /// Bold's capitals advance at most about 0.8 em, W and M the widest; from the font's
    /// metrics as remembered, with room to spare).
    pub fn bold_caps_width_mm(text: &str, size: f32) -> f32 {
        text.chars().count() as f32 * size * 0.8 / PT_PER_MM
    }

    /// The height `lines` lines of `size` pt take, mm.
    pub fn lines_mm(lines: usize, size: f32) -> f32 {
        lines as f32 * size * 1.35 / PT_PER_MM
    }

    /// A paragraph wrapped to the width at `x_mm`, moving the cursor below it.
    pub fn paragraph(&mut self, x_mm: f32, size: f32, bold: bool, text: &str) {
        let lines = Flow::wrap(text, self.width_mm() - x_mm, size);
        self.keep_together(Flow::lines_mm(lines.len().min(3), size));
        for l in lines {
            self.keep_together(Flow::lines_mm(1, size));
            self.text_at(x_mm, size, bold, &l);
            self.y_mm += Flow::lines_mm(1, size);
        }
    }

    /// A horizontal rule across the width (or from `x_mm` for `len_mm`) at the cursor.
    pub fn rule(&mut self, x_mm: f32, len_mm: f32) {
        let y = self.baseline(self.y_mm);
        let (x0, x1) = (MARGIN_MM + x_mm, MARGIN_MM + x_mm + len_mm);
        let black = Color::Rgb(Rgb {
            r: 0.0,
            g: 0.0,
            b: 0.0,
            icc_profile: None,
        });
        let pt = |x: f32| LinePoint {
            p: Point::new(Mm(x), Mm(y)),
            bezier: false,
        };
        self.ops().extend([
            Op::SetOutlineColor { col: black },
            Op::SetOutlineThickness { pt: Pt(0.6) },
            Op::DrawLine {
                line: Line {
                    points: vec![pt(x0), pt(x1)],
                    is_closed: false,
                },
            },
        ]);
    }

    /// A PNG image scaled to `width_mm`, kept whole on a page; the cursor moves below it.
    pub fn image_png(&mut self, png: &[u8], width_mm: f32) -> Result<(), String> {
        let mut warnings = Vec::new();
        let img = RawImage::decode_from_bytes(png, &mut warnings)?;
        let (w_px, h_px) = (img.width as f32, img.height as f32);
        let height_mm = width_mm * h_px / w_px;
        self.keep_together(height_mm);
        let id = self.doc.add_image(&img);
        let dpi = w_px / (width_mm / 25.4);
        let bottom = self.baseline(self.y_mm + height_mm);
        self.ops().push(Op::UseXobject {
            id,
            transform: XObjectTransform {
                translate_x: Some(Mm(MARGIN_MM).into()),
                translate_y: Some(Mm(bottom).into()),
                dpi: Some(dpi),
                ..Default::default()
            },
        });
        self.y_mm += height_mm;
        Ok(())
    }

    /// Finish: a footer on every page ("`footer` — page k of n"), and the PDF's bytes.
    pub fn finish(mut self, footer: &str) -> Vec<u8> {
        let n = self.pages.len();
        let (w, h) = self.paper.size_mm();
        let pages: Vec<Vec<Op>> = std::mem::take(&mut self.pages);
        let mut out = Vec::with_capacity(n);
        for (k, mut ops) in pages.into_iter().enumerate() {
            let y = MARGIN_MM * 0.6;
            ops.extend([
                Op::StartTextSection,
                Op::SetFont {
                    font: PdfFontHandle::External(self.font.clone()),
                    size: Pt(8.0),
                },
                Op::SetTextCursor {
                    pos: Point::new(Mm(MARGIN_MM), Mm(y)),
                },
                Op::ShowText {
                    items: vec![TextItem::Text(format!("{footer} — page {} of {n}", k + 1))],
                },
                Op::EndTextSection,
            ]);
            out.push(PdfPage::new(Mm(w), Mm(h), ops));
        }
        let mut warnings = Vec::new();
        self.doc
            .with_pages(out)
            .save(&PdfSaveOptions::default(), &mut warnings)
    }
}
