//! Small helpers: locating test data, log relative error, the analysis context of a plain
//! log.

use std::path::PathBuf;

/// A file in `tests/data`.
pub fn data(name: &str) -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("data")
        .join(name)
}

/// NIST's log relative error: −log10(|estimate − certified| / |certified|), capped at 15.
pub fn lre(estimate: f64, certified: f64) -> f64 {
    let rel = ((estimate - certified) / certified).abs();
    if rel == 0.0 {
        15.0
    } else {
        (-rel.log10()).min(15.0)
    }
}

/// Read a two-column y,x CSV (a byte-order mark is tolerated).
pub fn read_yx(name: &str) -> (Vec<f64>, Vec<f64>) {
    let text = std::fs::read_to_string(data(name)).unwrap();
    let text = text.trim_start_matches('\u{feff}');
    let mut y = Vec::new();
    let mut x = Vec::new();
    for line in text.lines().skip(1).filter(|l| !l.trim().is_empty()) {
        let (a, b) = line.split_once(',').unwrap();
        y.push(a.trim().parse().unwrap());
        x.push(b.trim().parse().unwrap());
    }
    (y, x)
}

/// What the analysis knows of a plain log: no calibration, no magnet, the built-in spec table,
/// the standard-limits thermocouple tolerance.
pub fn ctx() -> remanent::analysis::Context {
    remanent::analysis::Context {
        calibration: None,
        magnet: None,
        specs: remanent::specs::SpecTable::builtin(),
        default_tc_gain_pct: 0.75,
        reference: None,
    }
}

/// A short recording on the in-process virtual rig: the magnet as stated, the rig it runs on,
/// the calibration and policy, and the cycle (each segment target °C, ramp °C/min, hold s).
pub struct VirtualRecord {
    /// What the record says about the magnet.
    pub info: remanent::magnets::MagnetInfo,
    /// The rig and its magnet's behaviour.
    pub rig: remanent::virtual_rig::VirtualRigOptions,
    /// Converts the record.
    pub calibration: remanent::calibration::Calibration,
    /// Whether the bench may measure.
    pub policy: remanent::calibration::policy::Policy,
    /// The profile's limit, °C.
    pub limit_c: f64,
    /// The cycle.
    pub segments: Vec<(f64, f64, f64)>,
    /// Rest before heating, s.
    pub preroll_s: f64,
}

impl VirtualRecord {
    /// Record into `out` (a new directory).
    pub fn run(
        self,
        out: &std::path::Path,
    ) -> Result<remanent::jobs::record::RecordSummary, remanent::jobs::record::RecordError> {
        use remanent::jobs::record::{record, Quiet, RecordOptions};
        use remanent::profiles::{ProfileSpec, SegmentSpec};
        let rec = RecordOptions {
            port_label: "simulated".into(),
            policy: self.policy,
            silence_timeout: std::time::Duration::from_secs(5),
            preroll_s: self.preroll_s,
            ..RecordOptions::new(
                self.info,
                ProfileSpec {
                    name: "short".into(),
                    description: "a short cycle".into(),
                    limit_c: self.limit_c,
                    segments: self
                        .segments
                        .iter()
                        .map(|&(target_c, ramp_c_per_min, hold_s)| SegmentSpec {
                            target_c,
                            ramp_c_per_min,
                            hold_s,
                        })
                        .collect(),
                },
                self.calibration,
                out.to_path_buf(),
            )
        };
        let mut port = remanent::virtual_rig::SimulatedPort::new(self.rig);
        record(&mut port, rec, &mut Quiet)
    }
}

/// A 25 → 60 → 25 °C cycle at 8 °C/min: a couple of minutes of virtual time.
pub const SHORT_CYCLE: [(f64, f64, f64); 3] =
    [(25.0, 0.0, 120.0), (60.0, 8.0, 60.0), (25.0, 8.0, 240.0)];

/// Fail unless one of the analysis's notes contains `text` (showing them all).
pub fn assert_noted(a: &remanent::analysis::Analysis, text: &str) {
    assert!(
        a.notes.iter().any(|n| n.to_string().contains(text)),
        "no note says `{text}`: {:#?}",
        a.notes
    );
}

/// The demo part on `rapid`, ended by the analysis, into `out`.
pub fn rapid_run(out: &std::path::Path, seed: u64) {
    use remanent::jobs::trial::{self, TrialSpec};
    let spec = TrialSpec {
        magnet: "RM-N42SH-D10x5".into(),
        magnet_tau_s: 45.0,
        profile: remanent::profiles::ProfileSpec::resolve("rapid").unwrap(),
        auto_end: Some(Default::default()),
        preroll_s: 60.0,
        seed,
    };
    trial::run(&spec, out).unwrap();
}

/// A plot's files show what they must: the SVG carries every `text` (axis labels, series,
/// ids) and at least `points` drawn markers (circles); the PNG beside it is a real image of the
/// SVG's size (its IHDR read from the file).
pub fn assert_plot_shows(stem: &std::path::Path, texts: &[&str], points: usize) {
    let svg = std::fs::read_to_string(stem.with_extension("svg")).expect("the SVG");
    for t in texts {
        assert!(svg.contains(t), "{} lacks {t:?}", stem.display());
    }
    let drawn = svg.matches("<circle").count();
    assert!(
        drawn >= points,
        "{}: {drawn} markers, want {points}",
        stem.display()
    );
    let png = std::fs::read(stem.with_extension("png")).expect("the PNG");
    assert_eq!(&png[..8], b"\x89PNG\r\n\x1a\n", "PNG signature");
    let dim = |at: usize| u32::from_be_bytes([png[at], png[at + 1], png[at + 2], png[at + 3]]);
    let attr = |name: &str| -> u32 {
        let i = svg.find(&format!("{name}=\"")).expect("svg size") + name.len() + 2;
        svg[i..]
            .split('"')
            .next()
            .unwrap()
            .parse()
            .expect("svg size number")
    };
    assert_eq!(
        (dim(16), dim(20)),
        (attr("width"), attr("height")),
        "PNG of the SVG's size"
    );
}
