//! The one HTML template every page uses: a self-contained document (no network) with the
//! house style, escaping, and the small building blocks (key–value tables, figures, lists).

use std::fmt::Write as _;

/// Escape text for HTML.
pub fn esc(t: &str) -> String {
    t.replace('&', "&amp;")
        .replace('<', "&lt;")
        .replace('>', "&gt;")
}

const STYLE: &str = "body{font-family:sans-serif;max-width:1150px;margin:2em auto;color:#222}\
table{border-collapse:collapse;margin:1em 0}td,th{border:1px solid #bbb;padding:4px 8px;text-align:left}\
.v{font-size:1.4em;font-weight:bold} .pass{color:#1b6e2a} .fail{color:#a21d1d} .indeterminate{color:#8a6100}\
.o{color:#a21d1d;font-weight:bold} figure{margin:1em 0} svg{max-width:100%;height:auto}\
.sign{display:flex;gap:2em;margin-top:3em}.sign div{flex:1;border-top:1px solid #222;padding-top:4px;font-size:.85em}\
@media print{@page{size:A4;margin:15mm}body{max-width:none;margin:0;font-size:10pt}\
h1{font-size:15pt}h2{font-size:12pt;break-after:avoid;page-break-after:avoid}\
table,figure,.keep,.sign{break-inside:avoid;page-break-inside:avoid}\
figure svg{max-height:120mm;width:auto}.screen{display:none}}";

/// An HTML page being written.
pub struct Page {
    html: String,
}

impl Page {
    /// A page titled `Remanent {kind} — {title}`, with its heading.
    pub fn new(kind: &str, title: &str) -> Page {
        let t = esc(title);
        Page {
            html: format!(
                "<!doctype html><html lang=\"en\"><head><meta charset=\"utf-8\">\
                 <title>Remanent {kind} — {t}</title><style>{STYLE}</style></head><body>\
                 <h1>Remanent {kind} — {t}</h1>"
            ),
        }
    }

    /// Raw HTML (the caller escaped what needs it).
    pub fn raw(&mut self, html: &str) -> &mut Page {
        self.html.push_str(html);
        self
    }

    /// A heading.
    pub fn h2(&mut self, text: &str) -> &mut Page {
        let _ = write!(self.html, "<h2>{}</h2>", esc(text));
        self
    }

    /// A paragraph of text.
    pub fn p(&mut self, text: &str) -> &mut Page {
        let _ = write!(self.html, "<p>{}</p>", esc(text));
        self
    }

    /// A two-column table of names and values.
    pub fn facts(&mut self, rows: &[(String, String)]) -> &mut Page {
        self.html.push_str("<table>");
        for (k, v) in rows {
            let _ = write!(self.html, "<tr><th>{}</th><td>{}</td></tr>", esc(k), esc(v));
        }
        self.html.push_str("</table>");
        self
    }

    /// A table with a header row; cells are escaped.
    pub fn table(&mut self, header: &[&str], rows: &[Vec<String>]) -> &mut Page {
        self.html.push_str("<table><tr>");
        for h in header {
            let _ = write!(self.html, "<th>{}</th>", esc(h));
        }
        self.html.push_str("</tr>");
        for r in rows {
            self.html.push_str("<tr>");
            for c in r {
                let _ = write!(self.html, "<td>{}</td>", esc(c));
            }
            self.html.push_str("</tr>");
        }
        self.html.push_str("</table>");
        self
    }

    /// A bulleted list.
    pub fn list<'a>(&mut self, items: impl IntoIterator<Item = &'a str>) -> &mut Page {
        self.html.push_str("<ul>");
        for i in items {
            let _ = write!(self.html, "<li>{}</li>", esc(i));
        }
        self.html.push_str("</ul>");
        self
    }

    /// An embedded SVG figure.
    pub fn figure(&mut self, id: &str, svg_element: &str) -> &mut Page {
        let _ = write!(
            self.html,
            "<figure id=\"{}\">{svg_element}</figure>",
            esc(id)
        );
        self
    }

    /// The finished document.
    pub fn finish(mut self) -> String {
        self.html.push_str("</body></html>\n");
        self.html
    }
}
