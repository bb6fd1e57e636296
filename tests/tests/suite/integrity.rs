//! A record holds exactly what the device sent after its start: checked against the samples
//! the simulated device itself sent (its undamaged stream), through an outage longer than the
//! low sequence byte can span, and after an earlier session on the same port.

use std::time::Duration;

use remanent::calibration::Calibration;
use remanent::jobs::record::{record, Quiet, RecordEnd, RecordOptions};
use remanent::magnets;
use remanent::profiles::{ProfileSpec, SegmentSpec};
use remanent::run_dir::{for_each_row, SampleRow};
use remanent::virtual_rig::{SimulatedPort, VirtualRig, VirtualRigOptions};

fn profile(hold_s: f64) -> ProfileSpec {
    let seg = |target_c, ramp_c_per_min, hold_s| SegmentSpec {
        target_c,
        ramp_c_per_min,
        hold_s,
    };
    ProfileSpec {
        name: "integrity".into(),
        description: "a short warm hold".into(),
        limit_c: 80.0,
        segments: vec![seg(40.0, 10.0, hold_s), seg(30.0, 10.0, 10.0)],
    }
}

pub fn rows(dir: &std::path::Path) -> Vec<SampleRow> {
    let parse = |b: &[u8]| {
        std::str::from_utf8(b)
            .map_err(|e| e.to_string())
            .and_then(SampleRow::parse_line)
    };
    let mut out = Vec::new();
    for_each_row(dir, &parse, |r, _| -> Result<(), ()> {
        out.push(r.unwrap().1);
        Ok(())
    })
    .unwrap()
    .unwrap();
    out
}

#[test]
fn through_an_outage_longer_than_the_sequence_byte_every_row_is_what_the_device_sent() {
    let m = magnets::resolve("RM-N42SH-D10x5").unwrap();
    let mut opts = VirtualRigOptions::new(m.model.unwrap());
    // 30 s of device time at 10 samples/s: 300 samples lost, more than the low byte spans
    opts.link_outage_s = Some((150.0, 180.0));
    opts.keep_sent = true;
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("run");
    let rec = RecordOptions {
        port_label: "outage".into(),
        silence_timeout: Duration::from_secs(30),
        preroll_s: 30.0,
        ..RecordOptions::new(
            m.info.clone(),
            profile(200.0),
            Calibration::virtual_rig(&opts.params),
            out.clone(),
        )
    };
    let mut port = SimulatedPort::new(opts);
    let summary = record(&mut port, rec, &mut Quiet).unwrap();
    assert_eq!(summary.end, RecordEnd::Finished);
    assert!(summary.counts.gap_samples >= 290, "{:?}", summary.counts);
    let sent = port.bench().sent_samples().unwrap();
    let recorded = rows(&out);
    assert!(recorded.len() > 1000);
    for r in &recorded {
        let s = sent
            .get(&r.seq)
            .unwrap_or_else(|| panic!("seq {} was never sent", r.seq));
        assert_eq!(
            (r.hall_code, r.probe_code, r.thermo_word),
            (s.hall_code, s.probe_code, s.thermo),
            "row seq {} holds another sample's readings",
            r.seq
        );
    }
    // and nothing after the outage was lost beyond it
    let last = recorded.last().unwrap().seq;
    let missing_after = (recorded[0].seq..=last)
        .filter(|q| sent.contains_key(q))
        .count()
        - recorded.len();
    assert_eq!(missing_after as u64, summary.counts.gap_samples);
}

#[test]
fn a_record_after_a_self_test_on_the_same_port_holds_only_its_own_samples() {
    let m = magnets::resolve("RM-N42SH-D10x5").unwrap();
    let mut opts = VirtualRigOptions::new(m.model.unwrap());
    opts.speed = 40.0;
    let cal = Calibration::virtual_rig(&opts.params);
    let rig = VirtualRig::start(opts).unwrap();
    // an earlier session heats the fixture, trips and clears a fault, then leaves
    let port = remanent::link::port::open(rig.path()).unwrap();
    let (_, steps) = remanent::jobs::selftest::run(port, cal, &Default::default()).unwrap();
    assert!(steps.iter().all(|s| s.passed), "{steps:#?}");
    std::thread::sleep(Duration::from_millis(1500));
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("run");
    let rec = RecordOptions {
        port_label: rig.path().into(),
        silence_timeout: Duration::from_secs(5),
        preroll_s: 20.0,
        ..RecordOptions::new(m.info.clone(), profile(60.0), cal, out.clone())
    };
    let port = remanent::link::port::open(rig.path()).unwrap();
    let summary = record(port, rec, &mut Quiet).unwrap();
    rig.stop().unwrap();
    assert_eq!(summary.end, RecordEnd::Finished);
    assert_eq!(summary.counts.gap_samples, 0, "{:?}", summary.counts);
    // every row was taken after the record's start: after the newest sample named by the
    // first beacon that followed the device's hello to this record (read back from raw.bin)
    let recorded = rows(&out);
    let raw = std::fs::read(out.join("raw.bin")).unwrap();
    let mut frames = Vec::new();
    remanent_protocol::decoder::DeviceDecoder::for_device_msgs().feed(&raw, |f| frames.push(f));
    let hello = frames
        .iter()
        .position(|f| matches!(f, Ok(remanent_protocol::DeviceMsg::Hello(_))))
        .expect("the hello is in raw.bin");
    let start_seq = frames[hello..]
        .iter()
        .find_map(|f| match f {
            Ok(remanent_protocol::DeviceMsg::Beacon(b)) => Some(b.seq),
            _ => None,
        })
        .unwrap();
    assert!(
        recorded[0].seq > start_seq,
        "the record begins with samples from before its start: seq {} ≤ {start_seq}",
        recorded[0].seq
    );
    // the pre-roll is at rest: no heating from the earlier session's samples
    let first_t = recorded[0].device_time_s;
    let preroll: Vec<&SampleRow> = recorded
        .iter()
        .filter(|r| r.device_time_s < first_t + 15.0)
        .collect();
    assert!(preroll.len() > 100);
    assert!(
        preroll
            .iter()
            .all(|r| r.heater_duty_pct == 0.0 && r.fault_latched == 0),
        "stale rows of the earlier session at the start of the record"
    );
    assert!(recorded.windows(2).all(|w| w[1].seq == w[0].seq + 1));
}

fn simulated_record(
    out: &std::path::Path,
    profile: ProfileSpec,
) -> Result<remanent::jobs::record::RecordSummary, remanent::jobs::record::RecordError> {
    let m = magnets::resolve("RM-N42SH-D10x5").unwrap();
    let opts = VirtualRigOptions::new(m.model.unwrap());
    let rec = RecordOptions {
        port_label: "simulated".into(),
        silence_timeout: Duration::from_secs(5),
        preroll_s: 20.0,
        ..RecordOptions::new(
            m.info.clone(),
            profile,
            Calibration::virtual_rig(&opts.params),
            out.to_path_buf(),
        )
    };
    record(&mut SimulatedPort::new(opts), rec, &mut Quiet)
}

#[test]
fn events_are_in_time_order_with_every_time_filled_and_a_torn_last_row_is_tolerated() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("run");
    let s = simulated_record(&out, profile(60.0)).unwrap();
    assert_eq!(s.end, RecordEnd::Finished);
    let mut rdr = csv::Reader::from_path(out.join("events.csv")).unwrap();
    let times: Vec<f64> = rdr
        .records()
        .map(|r| {
            r.unwrap()[0]
                .parse::<f64>()
                .expect("every event has a time")
        })
        .collect();
    assert!(times.len() >= 3, "{times:?}");
    assert!(times.windows(2).all(|w| w[0] <= w[1]), "{times:?}");
    // a record cut off mid-row (power loss, full disk) still loads, and says so
    let n_rows = rows(&out).len();
    use std::io::Write as _;
    let mut f = std::fs::OpenOptions::new()
        .append(true)
        .open(out.join("samples.csv"))
        .unwrap();
    write!(f, "999999,12.3,170").unwrap();
    drop(f);
    let (series, _) = remanent::input::dataset::load_run(&out, None).unwrap();
    assert_eq!(series.time_s.len(), n_rows);
    assert!(series.skipped.iter().any(|(_, why)| why.contains("torn")));
}

#[test]
fn a_refused_record_leaves_no_directory_behind() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("run");
    // above the firmware's 350 °C ceiling: the device refuses the profile
    let mut p = profile(10.0);
    p.limit_c = 390.0;
    p.segments[0].target_c = 380.0;
    let e = simulated_record(&out, p).unwrap_err();
    assert!(e.to_string().contains("ceiling"), "{e}");
    assert!(!out.exists(), "the name stays free");
}

/// A tmpfs of `size` mounted on a new temporary folder (root needed; unmount it when done).
fn small_disk(size: &str) -> tempfile::TempDir {
    let mnt = tempfile::tempdir().unwrap();
    let ok = std::process::Command::new("mount")
        .args(["-t", "tmpfs", "-o", &format!("size={size}"), "tmpfs"])
        .arg(mnt.path())
        .status()
        .unwrap()
        .success();
    assert!(ok, "mount a tmpfs (root needed)");
    mnt
}

/// A full disk: run by `.ci/run` as root (it mounts a small tmpfs).
#[test]
#[ignore = "needs root to mount a small tmpfs; .ci/run runs it"]
fn on_a_full_disk_every_complete_row_is_kept_and_the_run_says_why() {
    let mnt = small_disk("192k");
    let out = mnt.path().join("run");
    let result = simulated_record(&out, profile(600.0));
    let listing: Vec<(String, u64)> = std::fs::read_dir(&out)
        .map(|d| {
            d.map(|e| {
                let e = e.unwrap();
                (
                    e.file_name().to_string_lossy().into_owned(),
                    e.metadata().unwrap().len(),
                )
            })
            .collect()
        })
        .unwrap_or_default();
    let meta = remanent::run_dir::read_meta(&out);
    let loaded = remanent::input::dataset::load_run(&out, None).map(|(s, _)| s.time_s.len());
    let _ = std::process::Command::new("umount")
        .arg(mnt.path())
        .status();
    let s = result.expect("a full disk ends the record, it is not an error");
    assert!(matches!(s.end, RecordEnd::WriteFailed(_)), "{:?}", s.end);
    assert!(
        meta.unwrap()
            .end_reason
            .unwrap()
            .contains("could not write"),
        "run.toml says why"
    );
    for (name, len) in &listing {
        assert!(!name.starts_with('.'), "left behind: {name}");
        assert!(*len > 0, "0-byte file: {name}");
    }
    assert!(loaded.expect("the rows written load") > 100);
}

#[test]
#[ignore = "mounts a tmpfs: needs root (.ci/run runs it)"]
fn on_a_full_disk_from_the_start_no_run_folder_is_left_and_the_name_stays_free() {
    // smaller than the space a record sets aside for its end: setting up fails
    let mnt = small_disk("32k");
    let out = mnt.path().join("run");
    let result = simulated_record(&out, profile(600.0));
    let left = out.exists();
    let _ = std::process::Command::new("umount")
        .arg(mnt.path())
        .status();
    let e = result.expect_err("a run that cannot be set up is an error");
    assert!(
        e.to_string().contains("run") || e.to_string().contains("No space"),
        "says where: {e}"
    );
    assert!(!left, "no half-made run folder blocks the name");
}

#[test]
fn link_corruption_is_detected_and_counted_and_never_written() {
    use remanent::virtual_rig::SimulatedPort;
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("noisy");
    let m = magnets::resolve("RM-S2C17-D10x5").unwrap();
    let mut opts = VirtualRigOptions::new(m.model.unwrap());
    // bits flipped and bytes lost on the wire between rig and host
    opts.link_flip_probability = 0.002;
    opts.link_drop_probability = 0.001;
    opts.keep_sent = true;
    let rec = RecordOptions {
        port_label: "noisy".into(),
        ..RecordOptions::new(
            m.info.clone(),
            crate::end_to_end::short_profile(),
            Calibration::virtual_rig(&opts.params),
            out.clone(),
        )
    };
    let mut port = SimulatedPort::new(opts);
    let summary = record(&mut port, rec, &mut Quiet).unwrap();
    let damaged = port.bench().truth().bytes_damaged;
    assert_eq!(summary.end, RecordEnd::Finished);
    let c = &summary.counts;
    let rejected = c.frames_bad_crc + c.frames_bad_cobs + c.frames_other;
    assert!(
        damaged > 20 && rejected > 0,
        "damaged {damaged} bytes, rejected {rejected}"
    );
    // a bit flipped into 0x00 splits a frame in two: at most two rejections per damaged byte;
    // a lost delimiter merges two frames into one rejection
    assert!(rejected <= 2 * damaged);
    assert!(c.gap_samples > 0 && c.gaps > 0);
    // every written row is exactly the sample the device sent under its sequence number
    let sent = port.bench().sent_samples().unwrap();
    let recorded = rows(&out);
    assert!(recorded.len() > 500, "{} rows", recorded.len());
    for r in &recorded {
        let s = sent
            .get(&r.seq)
            .unwrap_or_else(|| panic!("seq {} was never sent", r.seq));
        assert_eq!(
            (r.hall_code, r.probe_code, r.thermo_word),
            (s.hall_code, s.probe_code, s.thermo),
            "row seq {} holds a corrupted or misplaced sample",
            r.seq
        );
    }
    // and what is missing between the first and last row is exactly the counted gap
    let (first, last) = (recorded[0].seq, recorded.last().unwrap().seq);
    let missing = (first..=last).filter(|q| sent.contains_key(q)).count() - recorded.len();
    assert_eq!(missing as u64, c.gap_samples);
}

#[test]
fn a_raw_stream_this_build_cannot_rebuild_is_refused_saying_why_and_leaves_nothing() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("run");
    simulated_record(&out, profile(20.0)).unwrap();
    // recorded by a device of an older protocol (as its run.toml says)
    let meta_path = out.join("run.toml");
    let text = std::fs::read_to_string(&meta_path).unwrap();
    let older = text.replace(
        &format!("protocol = {}", remanent_protocol::PROTOCOL_VERSION),
        "protocol = 3",
    );
    assert_ne!(older, text, "run.toml names the protocol");
    std::fs::write(&meta_path, &older).unwrap();
    let to = dir.path().join("again");
    let e = remanent::jobs::replay::replay(&out, &to, None)
        .unwrap_err()
        .to_string();
    assert!(e.contains("protocol 3") && e.contains("run"), "{e}");
    assert!(!to.exists(), "nothing written");
    // the right protocol, but a raw stream with nothing in it
    std::fs::write(&meta_path, &text).unwrap();
    std::fs::write(out.join("raw.bin"), b"").unwrap();
    let e = remanent::jobs::replay::replay(&out, &to, None)
        .unwrap_err()
        .to_string();
    assert!(e.contains("no sample"), "{e}");
    assert!(!to.exists(), "nothing left to block the name");
}
