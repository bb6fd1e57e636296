//! The demo workflow: the whole job on the built-in virtual rig. The fixture's reference magnet
//! is read first on a rig of its own, then an invented demo part is recorded (in lockstep with
//! the recorder by default, or behind a pseudo-terminal at a speed), analysed against the
//! reference and reported with its certificate. The CLI only prints what each step returns.

use std::path::PathBuf;
use std::sync::atomic::AtomicBool;
use std::sync::Arc;

use crate::analysis::fixture_ref::FixtureReference;
use crate::analysis::Analysis;
use crate::calibration::Calibration;
use crate::inspection::Inspection;
use crate::jobs::record::{record, Progress, RecordOptions, RecordSummary};
use crate::jobs::survey::{Reading, SurveyProgress};
use crate::magnets::{self, MagnetFile};
use crate::run_dir::REFERENCE_FILE;
use crate::test_plan::TestPlan;
use crate::virtual_rig::{RigTruth, SimulatedPort, VirtualRig, VirtualRigOptions};
use remanent_rig_model::Magnet;

/// The demo's reference magnet.
pub const REFERENCE_PART: &str = "RM-REF-N42SH-D10x5";

/// A step of the demo failed.
#[derive(Debug, thiserror::Error)]
#[error("demo, {step}: {reason}")]
pub struct DemoError {
    /// Which step.
    pub step: &'static str,
    /// Why.
    pub reason: String,
}

fn at<E: std::fmt::Display>(step: &'static str) -> impl Fn(E) -> DemoError {
    move |e| DemoError {
        step,
        reason: e.to_string(),
    }
}

/// What the demo is asked to do.
#[derive(Clone)]
pub struct DemoRequest {
    /// The demo part.
    pub magnet: String,
    /// The profile (held to the part's safe peak).
    pub profile: String,
    /// Simulated seconds per second behind a pseudo-terminal; none: lockstep, in-process.
    pub speed: Option<f64>,
    /// The run directory to make.
    pub out: PathBuf,
    /// The virtual rig's noise seed.
    pub seed: u64,
    /// Lot, order, supplier, operator (the demo's invented shipment fills what is missing).
    pub inspection: Inspection,
    /// Set to stop the heater and end the record (Ctrl-C).
    pub stop: Arc<AtomicBool>,
}

/// The demo's shipment: invented, like its magnets.
pub fn demo_inspection(given: &Inspection) -> Inspection {
    given.or(&Inspection {
        lot: Some("DEMO-LOT-26-11".into()),
        purchase_order: Some("PO-DEMO-0042".into()),
        supplier: Some("Kestrel Magnet Works (invented)".into()),
        operator: Some("demo".into()),
    })
}

/// The part, its rig model and its test plan.
pub struct Prepared {
    /// The demo part.
    pub part: MagnetFile,
    /// How the virtual rig makes it behave.
    pub model: Magnet,
    /// The profile held to its safe peak.
    pub plan: TestPlan,
}

/// Resolve the part and plan its test.
pub fn prepare(req: &DemoRequest) -> Result<Prepared, DemoError> {
    let part = magnets::resolve(&req.magnet).map_err(at("the part"))?;
    let model = part.model.ok_or_else(|| DemoError {
        step: "the part",
        reason: format!("{} has no model for the virtual rig", part.info.id),
    })?;
    let specs = crate::specs::SpecTable::builtin();
    let plan = crate::test_plan::plan(&req.profile, &part.info, &specs, false)
        .map_err(at("the test plan"))?;
    Ok(Prepared { part, model, plan })
}

/// A survey's progress that goes nowhere.
struct Quiet;
impl SurveyProgress for Quiet {
    fn reading(&mut self, _: &Reading) {}
    fn notice(&mut self, _: &crate::event::Notice) {}
}

/// The fixture's reference: the demo reference part read on its own virtual rig (of the same
/// design as the part's: the same constants).
pub fn measure_reference(req: &DemoRequest) -> Result<(MagnetFile, FixtureReference), DemoError> {
    let part = magnets::resolve(REFERENCE_PART).map_err(at("the reference"))?;
    let model = part.model.expect("a demo part has a model");
    let mut opts = VirtualRigOptions::new(model);
    opts.seed = req.seed ^ 0x5eed;
    let cal = Calibration::virtual_rig(&remanent_rig_model::RigParams::REFERENCE);
    let measure = |port: &mut dyn ReadWrite| {
        crate::jobs::reference::measure(port, &part, cal, Default::default(), 1, None, &mut Quiet)
            .map_err(at("the reference"))
    };
    let r = match req.speed {
        None => measure(&mut SimulatedPort::new(opts))?,
        Some(speed) => {
            opts.speed = speed;
            let rig = VirtualRig::start(opts).map_err(at("the reference's rig"))?;
            let mut port =
                crate::link::port::open(rig.path()).map_err(at("the reference's rig"))?;
            let r = measure(&mut port)?;
            rig.stop().map_err(at("the reference's rig"))?;
            r
        }
    };
    Ok((part, r))
}

/// A port either rig offers.
trait ReadWrite: std::io::Read + std::io::Write {}
impl<T: std::io::Read + std::io::Write + ?Sized> ReadWrite for T {}

/// Record the part; the record and the virtual rig's truth.
pub fn record_part(
    req: &DemoRequest,
    p: &Prepared,
    progress: &mut dyn Progress,
) -> Result<(RecordSummary, RigTruth), DemoError> {
    let mut opts = VirtualRigOptions::new(p.model);
    opts.seed = req.seed;
    let calibration = Calibration::virtual_rig(&opts.params);
    let rec = |port_label: String| RecordOptions {
        inspection: demo_inspection(&req.inspection),
        auto_end: Some(Default::default()),
        port_label,
        stop: req.stop.clone(),
        ..RecordOptions::new(
            p.part.info.clone(),
            p.plan.profile.clone(),
            calibration,
            req.out.clone(),
        )
    };
    match req.speed {
        None => {
            let mut port = SimulatedPort::new(opts);
            let rec = RecordOptions {
                // lockstep: a silent link is a broken simulation, not a slow machine
                silence_timeout: std::time::Duration::from_secs(5),
                ..rec("virtual rig (in-process, lockstep)".into())
            };
            let summary = record(&mut port, rec, progress).map_err(at("the record"))?;
            Ok((summary, port.bench().truth()))
        }
        Some(speed) => {
            opts.speed = speed;
            let rig = VirtualRig::start(opts).map_err(at("the part's rig"))?;
            let port = crate::link::port::open(rig.path()).map_err(at("the part's rig"))?;
            let label = format!("virtual rig ({})", rig.path());
            let summary = record(port, rec(label), progress).map_err(at("the record"))?;
            Ok((summary, rig.stop().map_err(at("the part's rig"))?))
        }
    }
}

/// What the demo made of a complete record.
pub struct Finished {
    /// The analysis, Br referred to the fixture's reference.
    pub analysis: Analysis,
    /// The reference file kept with the run, then every output written.
    pub written: Vec<PathBuf>,
    /// The summary's title.
    pub title: String,
}

/// Keep the reference with the run, analyse the record against it and write every output.
pub fn finish(
    req: &DemoRequest,
    reference: &FixtureReference,
    look: &crate::report::Look,
) -> Result<Finished, DemoError> {
    let ref_file = req.out.join(REFERENCE_FILE);
    let text = toml::to_string(reference).map_err(at("the reference file"))?;
    crate::output::write(&ref_file, text.as_bytes(), false).map_err(at("the reference file"))?;
    let input = crate::jobs::InputRequest {
        input: req.out.clone(),
        reference: Some(ref_file.clone()),
        ..Default::default()
    };
    let loaded = crate::jobs::analyze_input::load(&input).map_err(at("the analysis"))?;
    let (analysis, traces) = loaded
        .analyze_traced(&input.input)
        .map_err(at("the analysis"))?;
    let source = crate::report::Source {
        meta: loaded.meta.as_ref(),
        raw: Some(&req.out.join(crate::run_dir::RAW_FILE)),
    };
    let subject = crate::report::Subject {
        series: &loaded.series,
        analysis: &analysis,
        traces: &traces,
        title: &loaded.title,
    };
    let mut written = crate::report::write_all_as(&req.out, &subject, &source, false, look)
        .map_err(at("the report"))?;
    written.insert(0, ref_file);
    Ok(Finished {
        analysis,
        written,
        title: loaded.title,
    })
}
