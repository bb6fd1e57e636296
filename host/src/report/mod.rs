//! Reports beside a run: the plots, a self-contained HTML page (plots embedded as SVG, no
//! network), a Markdown version and the machine-readable `analysis.json`; and the report of a
//! record the analysis could not use. Every file goes through the output policy: nothing is
//! replaced without `force`, nothing half-written is left behind.

pub mod certificate;
pub mod lot_page;
pub mod markdown;
pub mod notes;
pub mod page;
pub mod pdf_flow;
pub mod run_page;
pub mod seal;
pub mod summary;

use std::path::{Path, PathBuf};

pub use lot_page::lot_html;
pub use markdown::markdown;
pub use notes::{safety_notes, METHOD_NOTES};

use crate::analysis::dataset::Series;
use crate::analysis::Analysis;
use crate::output::{self, OutputError};
use crate::plots::{self, PlotError};
use crate::run_dir;
use crate::units::DisplayUnits;
use page::Page;

/// How the outputs people read are presented: display units and paper. Data files (JSON,
/// CSV) ignore it and stay in SI-based units.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Look {
    /// The units numbers are shown in.
    pub units: DisplayUnits,
    /// The certificate's paper.
    pub paper: pdf_flow::Paper,
    /// The issuing lab, as the certificate names it (the config file's `[lab]`).
    pub issuer: Option<String>,
}

/// Writing the report failed.
#[derive(Debug, thiserror::Error)]
pub enum ReportError {
    /// A file is already there, or writing failed.
    #[error(transparent)]
    Output(#[from] OutputError),
    /// A plot failed.
    #[error(transparent)]
    Plot(#[from] PlotError),
}

/// Report file names.
pub const HTML_FILE: &str = "report.html";
/// Markdown report.
pub const MD_FILE: &str = "report.md";
/// Machine-readable analysis.
pub const JSON_FILE: &str = "analysis.json";

/// Write every output of a run in SI-based units on A4; returns the files written.
pub fn write_all(
    dir: &Path,
    series: &Series,
    a: &Analysis,
    title: &str,
    force: bool,
) -> Result<Vec<PathBuf>, ReportError> {
    let meta = run_dir::read_meta(dir).ok();
    let raw = Some(dir.join(run_dir::RAW_FILE)).filter(|p| p.is_file());
    let src = Source {
        meta: meta.as_ref(),
        raw: raw.as_deref(),
    };
    write_all_as(dir, series, a, &src, title, force, &Look::default())
}

/// Where a report's record comes from: the run's own facts (read from the run, never from where
/// the outputs go) and its raw bytes (a run's raw.bin, a logger's file), which the
/// certificate's seal fingerprints.
#[derive(Debug, Clone, Copy, Default)]
pub struct Source<'a> {
    /// The run's metadata (none for a logger's file).
    pub meta: Option<&'a run_dir::RunMeta>,
    /// The record's raw bytes.
    pub raw: Option<&'a Path>,
}

/// [`write_all`] in `look`'s units and on its paper, into `dir`, for the record `src`.
pub fn write_all_as(
    dir: &Path,
    series: &Series,
    a: &Analysis,
    src: &Source,
    title: &str,
    force: bool,
    look: &Look,
) -> Result<Vec<PathBuf>, ReportError> {
    let meta = src.meta;
    let u = &look.units;
    let docs = [JSON_FILE, MD_FILE, HTML_FILE, certificate::CERTIFICATE_FILE].map(|f| dir.join(f));
    output::refuse_existing(docs.clone(), force)?;
    let figures = plots::run_figures(dir, series, a, title, force, u)?;
    let json = serde_json::to_string_pretty(a).expect("analysis serializes");
    output::write(&docs[0], json.as_bytes(), force)?;
    output::write(&docs[1], markdown(a, meta, title, u).as_bytes(), force)?;
    let html = run_page::html(a, meta, title, &figures, u);
    output::write(&docs[2], html.as_bytes(), force)?;
    let plot = std::fs::read(&figures[0].png).map_err(|source| OutputError::Io {
        path: figures[0].png.display().to_string(),
        source,
    })?;
    let sealed = match src.raw {
        Some(raw) => Some(
            seal::seal(
                &seal::relative_to(raw, dir),
                Path::new(JSON_FILE),
                &a.provenance.analysed_utc,
                look.issuer.clone(),
                dir,
            )
            .map_err(|e| OutputError::Produce {
                path: dir.join(seal::SEAL_FILE).display().to_string(),
                reason: e.to_string(),
            })?,
        ),
        None => None,
    };
    let pdf =
        certificate::certificate(a, meta, sealed.as_ref(), &plot, look).map_err(|reason| {
            OutputError::Produce {
                path: docs[3].display().to_string(),
                reason,
            }
        })?;
    output::write(&docs[3], &pdf, force)?;
    let mut written: Vec<PathBuf> = figures.iter().flat_map(|f| f.files()).collect();
    written.extend(docs);
    if let Some(s) = &sealed {
        let at = dir.join(seal::SEAL_FILE);
        output::write(
            &at,
            toml::to_string(s).expect("a seal serializes").as_bytes(),
            true,
        )?;
        written.push(at);
    }
    Ok(written)
}

/// The report of a record the analysis could not use: the time series, the run's facts and,
/// plainly, what could not be computed and why.
pub fn write_unanalysed(
    dir: &Path,
    meta: Option<&run_dir::RunMeta>,
    series: &Series,
    title: &str,
    reason: &str,
    force: bool,
    u: &DisplayUnits,
) -> Result<Vec<PathBuf>, ReportError> {
    let (md_path, html_path) = (dir.join(MD_FILE), dir.join(HTML_FILE));
    output::refuse_existing([md_path.clone(), html_path.clone()], force)?;
    let figure = plots::timeline_figure(&dir.join("timeline"), series, title, force, u)?;
    let facts = notes::facts(meta, u);
    let safety = safety_notes(u);
    let mut md = format!("# Remanent report — {title}\n\n**Not analysed:** {reason}\n\n");
    for (k, v) in &facts {
        md.push_str(&format!("- **{k}**: {v}\n"));
    }
    md.push_str("\n![time series](timeline.png)\n\n## Safety\n\n");
    for n in &safety {
        md.push_str(&format!("- {n}\n"));
    }
    output::write(&md_path, md.as_bytes(), force)?;
    let mut page = Page::new("report", title);
    page.p(&format!("Not analysed: {reason}"))
        .facts(&facts)
        .figure("timeline", figure.svg_element())
        .h2("Safety")
        .list(safety.iter().map(String::as_str));
    output::write(&html_path, page.finish().as_bytes(), force)?;
    let mut written = figure.files().to_vec();
    written.extend([md_path, html_path]);
    Ok(written)
}
