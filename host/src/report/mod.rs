//! Reports beside a run: the plots, a self-contained HTML page (plots embedded as SVG, no
//! network), a Markdown version and the machine-readable `analysis.json`; and the report of a
//! record the analysis could not use. Every file goes through the output policy: nothing is
//! replaced without `force`, nothing half-written is left behind.

pub mod certificate;
pub mod lot;
pub mod markdown;
pub mod notes;
pub mod page;
pub mod pdf_flow;
pub mod run_page;
pub mod seal;
pub mod summary;
pub mod tables;

use std::path::{Path, PathBuf};

pub use lot::{lot_html, lot_outputs, lot_text};
pub use markdown::markdown;
pub use notes::{safety_notes, METHOD_NOTES};

use crate::analysis::{Analysis, Traces};
use crate::input::dataset::Series;
use crate::output::{self, OutputError, Produced};
use crate::plots::{self, Figure, PlotError};
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
    t: &Traces,
    title: &str,
    force: bool,
) -> Result<Vec<PathBuf>, ReportError> {
    let meta = run_dir::read_meta(dir).ok();
    let raw = Some(dir.join(run_dir::RAW_FILE)).filter(|p| p.is_file());
    let src = Source {
        meta: meta.as_ref(),
        raw: raw.as_deref(),
    };
    let subject = Subject {
        series,
        analysis: a,
        traces: t,
        title,
    };
    write_all_as(dir, &subject, &src, force, &Look::default())
}

/// What a run's report shows: the record as read, its analysis, the traces beside it, and the
/// title it goes by.
#[derive(Debug, Clone, Copy)]
pub struct Subject<'a> {
    /// The record.
    pub series: &'a Series,
    /// Its analysis.
    pub analysis: &'a Analysis,
    /// The per-sample traces the plots draw.
    pub traces: &'a Traces,
    /// The title.
    pub title: &'a str,
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
    subject: &Subject,
    src: &Source,
    force: bool,
    look: &Look,
) -> Result<Vec<PathBuf>, ReportError> {
    let files = run_outputs(dir, subject, src, look)?;
    Ok(output::write_set(dir, &files, force)?)
}

/// Every output of a run, rendered in memory: the plots (PNG, SVG), `analysis.json`, the
/// Markdown and HTML reports, the certificate and, for a record with raw bytes, its seal.
/// `dir` is where they will be filed (the seal names the record relative to it).
pub fn run_outputs(
    dir: &Path,
    subject: &Subject,
    src: &Source,
    look: &Look,
) -> Result<Vec<Produced>, ReportError> {
    let (meta, u) = (src.meta, &look.units);
    let (a, title) = (subject.analysis, subject.title);
    let figures = plots::run_figures(subject.series, a, subject.traces, title, u)?;
    let json = serde_json::to_string_pretty(a).expect("analysis serializes");
    let sealed = match src.raw {
        Some(raw) => Some(
            seal::seal(
                &seal::relative_to(raw, dir),
                Path::new(JSON_FILE),
                json.as_bytes(),
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
    let pdf = certificate::certificate(a, meta, sealed.as_ref(), &figures[0].png, look).map_err(
        |reason| OutputError::Produce {
            path: dir
                .join(certificate::CERTIFICATE_FILE)
                .display()
                .to_string(),
            reason,
        },
    )?;
    let mut files: Vec<Produced> = figures.iter().flat_map(Figure::files).collect();
    files.extend([
        Produced::new(JSON_FILE, json),
        Produced::new(MD_FILE, markdown(a, meta, title, u)),
        Produced::new(HTML_FILE, run_page::html(a, meta, title, &figures, u)),
        Produced::new(certificate::CERTIFICATE_FILE, pdf),
    ]);
    if let Some(s) = &sealed {
        let text = toml::to_string(s).expect("a seal serializes");
        files.push(Produced::new(seal::SEAL_FILE, text));
    }
    Ok(files)
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
    let files = unanalysed_outputs(meta, series, title, reason, u)?;
    Ok(output::write_set(dir, &files, force)?)
}

/// The outputs of [`write_unanalysed`], rendered in memory.
pub fn unanalysed_outputs(
    meta: Option<&run_dir::RunMeta>,
    series: &Series,
    title: &str,
    reason: &str,
    u: &DisplayUnits,
) -> Result<Vec<Produced>, ReportError> {
    let figure = plots::timeline_figure("timeline", series, title, u)?;
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
    let mut page = Page::new("report", title);
    page.p(&format!("Not analysed: {reason}"))
        .facts(&facts)
        .figure("timeline", figure.svg_element())
        .h2("Safety")
        .list(safety.iter().map(String::as_str));
    let mut files = figure.files().to_vec();
    files.extend([
        Produced::new(MD_FILE, md),
        Produced::new(HTML_FILE, page.finish()),
    ]);
    Ok(files)
}
