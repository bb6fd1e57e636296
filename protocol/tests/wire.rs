//! Wire-format tests: golden bytes for every message, round trips, and a corrupted stream.

use proptest::prelude::*;
use remanent_protocol::decoder::{DeviceDecoder, HostDecoder};
use remanent_protocol::*;

fn frame_of<T: serde::Serialize>(msg: &T) -> Vec<u8> {
    let mut buf = [0u8; MAX_FRAME];
    encode(msg, &mut buf).unwrap().to_vec()
}

/// The exact frames of the example messages. A change here is a wire-format change: bump
/// `PROTOCOL_VERSION` or the schema description with it. The sample frame was checked by hand:
/// COBS code 0x0f, tag 1, seq 0x2a, status 0x0d (heater on, 3 ms late), Hall 12345 LE,
/// probe 16000 LE, thermo word 0x01901880 BE (100 counts = 25.00 °C, cold junction 24.5 °C),
/// duty 102, CRC-16/IBM-3740 LE, delimiter.
const GOLDEN: [(&str, &[u8]); 18] = [
    (
        "hello",
        &[
            0x01, 0x07, 0x04, 0xa2, 0xda, 0xe0, 0xea, 0x0d, 0x02, 0x01, 0x14, 0x07, 0x76, 0x69,
            0x72, 0x74, 0x75, 0x61, 0x6c, 0x80, 0x80, 0x7d, 0x80, 0x80, 0xfa, 0x01, 0xe4, 0x19,
            0x90, 0x4e, 0x14, 0x64, 0x04, 0x88, 0x27, 0xd0, 0x0f, 0x32, 0x78, 0xc8, 0x01, 0x50,
            // heater: time-proportioning (tag 1), 2000 ms, 10 000 µs; boot: watchdog (tag 1),
            // Some(StuckReading = 5), not locked (the zero COBS-encoded as 0x05); latched:
            // Some(Watchdog = 13)
            0x01, 0xd0, 0x0f, 0x90, 0x4e, 0x01, 0x01, 0x05, 0x05, 0x01, 0x0d, 0x66, 0xd0, 0x00,
        ],
    ),
    (
        "sample",
        &[
            0x0f, 0x01, 0x2a, 0x0d, 0x39, 0x30, 0x80, 0x3e, 0x01, 0x90, 0x18, 0x80, 0x66, 0xd0,
            0x42, 0x00,
        ],
    ),
    (
        "beacon",
        &[
            0x04, 0x02, 0xac, 0x02, 0x0a, 0xe8, 0x07, 0x64, 0x02, 0x01, 0xaa, 0x0d, 0x09, 0xa2,
            0x00,
        ],
    ),
    (
        "state",
        &[0x09, 0x03, 0xe8, 0xfb, 0x03, 0x01, 0x02, 0xa0, 0x32, 0x00],
    ),
    (
        "fault",
        &[
            0x05, 0x04, 0xf0, 0xa2, 0x04, 0x05, 0xa4, 0x13, 0x4a, 0xf6, 0x00,
        ],
    ),
    ("ack", &[0x05, 0x05, 0x07, 0x1d, 0x92, 0x00]),
    (
        "refused",
        &[0x08, 0x06, 0x08, 0x03, 0xb8, 0x17, 0x68, 0xf5, 0x00],
    ),
    (
        "host hello",
        &[
            0x02, 0x01, 0x09, 0x04, 0xa2, 0xda, 0xe0, 0xea, 0x0d, 0xe6, 0x50, 0x00,
        ],
    ),
    (
        "start",
        &[
            0x12, 0x02, 0x01, 0xe0, 0x12, 0x02, 0xd0, 0x0f, 0x32, 0xd8, 0x04, 0xf4, 0x03, 0x32,
            0xac, 0x02, 0x86, 0x52, 0x00,
        ],
    ),
    ("stop", &[0x05, 0x03, 0x02, 0x1e, 0x68, 0x00]),
    (
        "manual",
        &[0x09, 0x04, 0x03, 0xe8, 0x07, 0xc0, 0x0c, 0x02, 0xb5, 0x00],
    ),
    ("heartbeat", &[0x06, 0xac, 0x02, 0x04, 0x87, 0x22, 0x00]),
    (
        "configure",
        &[0x07, 0x06, 0x05, 0x64, 0x04, 0xc3, 0xcf, 0x00],
    ),
    ("clear", &[0x05, 0x07, 0x06, 0x5e, 0xe4, 0x00]),
    ("inject", &[0x05, 0x08, 0x07, 0x41, 0xe4, 0x00]),
    // id 9, Drill (tag 8), Hang (1)
    ("drill", &[0x06, 0x09, 0x08, 0x01, 0x85, 0xcb, 0x00]),
    // id 10, Fixture (tag 9): 4000 mK/s (varint a0 1f), τ 125 s (7d), lag 500 ms (f4 03),
    // the rate falling 800 ppm/K (a0 06)
    (
        "fixture",
        &[
            0x0c, 0x0a, 0x09, 0xa0, 0x1f, 0x7d, 0xf4, 0x03, 0xa0, 0x06, 0xc3, 0xf9, 0x00,
        ],
    ),
    // id 11, Duty (tag 10): 20 %, limit 800 (zigzag 1600: c0 0c)
    (
        "duty",
        &[0x08, 0x0b, 0x0a, 0x14, 0xc0, 0x0c, 0x23, 0xdd, 0x00],
    ),
];

#[test]
fn every_message_encodes_to_its_golden_bytes_and_back() {
    let device = examples::device();
    let host = examples::host();
    assert_eq!(GOLDEN.len(), device.len() + host.len());
    for ((name, msg), (gname, bytes)) in device.iter().zip(&GOLDEN[..7]) {
        assert_eq!(name, gname);
        assert_eq!(frame_of(msg), *bytes, "device message {name}");
        let mut dec = DeviceDecoder::for_device_msgs();
        let mut out = Vec::new();
        dec.feed(bytes, |r| out.push(r));
        assert_eq!(out, vec![Ok(msg.clone())], "{name}");
    }
    for ((name, msg), (gname, bytes)) in host.iter().zip(&GOLDEN[7..]) {
        assert_eq!(name, gname);
        assert_eq!(frame_of(msg), *bytes, "host message {name}");
        let mut dec = HostDecoder::for_host_msgs();
        let mut out = Vec::new();
        dec.feed(bytes, |r| out.push(r));
        assert_eq!(out, vec![Ok(msg.clone())], "{name}");
    }
}

#[test]
fn a_sample_frame_is_sixteen_bytes() {
    assert_eq!(frame_of(&DeviceMsg::Sample(examples::sample())).len(), 16);
}

#[test]
fn the_computed_bounds_hold_for_the_largest_messages() {
    let mut segments = Segments::default();
    for _ in 0..MAX_SEGMENTS {
        segments
            .0
            .push(Segment {
                target_tenth_c: i16::MIN,
                ramp_tenth_c_per_min: u16::MAX,
                hold_s: u32::MAX,
            })
            .unwrap();
    }
    let big = HostMsg {
        id: u16::MAX,
        command: Command::Start(Profile {
            limit_tenth_c: i16::MIN,
            segments,
        }),
    };
    let mut buf = [0u8; MAX_HOST_FRAME];
    let frame = encode(&big, &mut buf).expect("the largest host frame fits MAX_HOST_FRAME");
    assert!(frame.len() <= MAX_HOST_FRAME);
    let mut small = [0u8; 8];
    assert!(
        encode(&big, &mut small).is_err(),
        "a short buffer is an error, not a panic"
    );
}

#[test]
fn version_mismatch_names_both_sides() {
    let host = VERSION;
    let device = Version {
        protocol: VERSION.protocol + 1,
        schema: 0xdead_beef,
    };
    let err = check_compatible(host, device).unwrap_err();
    let text = format!("{err}");
    assert!(
        text.contains(&format!("host speaks protocol {}", host.protocol)),
        "{text}"
    );
    assert!(
        text.contains(&format!("device speaks protocol {}", device.protocol)),
        "{text}"
    );
    assert!(text.contains("deadbeef"), "{text}");
    let same_number = Version {
        protocol: VERSION.protocol,
        schema: 1,
    };
    assert!(format!("{}", check_compatible(host, same_number).unwrap_err()).contains("schemas"));
}

#[test]
fn each_failure_is_reported_distinctly() {
    let good = frame_of(&DeviceMsg::Ack(Ack { id: 7 }));
    let run = |bytes: &[u8]| {
        let mut dec = DeviceDecoder::for_device_msgs();
        let mut out = Vec::new();
        dec.feed(bytes, |r| out.push(r));
        out
    };
    // CRC: flip a payload bit
    let mut bad_crc = good.clone();
    bad_crc[2] ^= 0x01;
    assert!(matches!(
        run(&bad_crc)[..],
        [Err(FrameError::BadCrc { .. })]
    ));
    // COBS: a code byte pointing past the end
    assert_eq!(
        run(&[0x09, 0x01, 0x02, 0x00]),
        vec![Err(FrameError::BadCobs)]
    );
    // too short
    assert_eq!(
        run(&[0x02, 0x05, 0x00]),
        vec![Err(FrameError::TooShort { len: 1 })]
    );
    // overlong
    let long = vec![0x55u8; MAX_FRAME + 10];
    let mut with_end = long.clone();
    with_end.push(0);
    assert_eq!(
        run(&with_end),
        vec![Err(FrameError::Overlong {
            len: MAX_FRAME + 10
        })]
    );
    // unknown tag with a valid CRC: build the payload by hand
    let payload = [42u8, 1, 2];
    let crc = remanent_protocol::frame::FRAME_CRC
        .checksum(&payload)
        .to_le_bytes();
    let raw = [payload[0], payload[1], payload[2], crc[0], crc[1]];
    let mut enc = [0u8; 16];
    let n = cobs::encode(&raw, &mut enc);
    let mut framed = enc[..n].to_vec();
    framed.push(0);
    assert_eq!(
        run(&framed),
        vec![Err(FrameError::UnknownMessage { tag: 42 })]
    );
    // known tag, body too short for it
    let payload = [1u8, 9];
    let crc = remanent_protocol::frame::FRAME_CRC
        .checksum(&payload)
        .to_le_bytes();
    let n = cobs::encode(&[payload[0], payload[1], crc[0], crc[1]], &mut enc);
    let mut framed = enc[..n].to_vec();
    framed.push(0);
    assert_eq!(run(&framed), vec![Err(FrameError::Malformed)]);
    // and an intact frame right after garbage still decodes
    let mut stream = vec![0x13, 0x37, 0x99, 0x00];
    stream.extend_from_slice(&good);
    let out = run(&stream);
    assert_eq!(out.len(), 2);
    assert!(out[0].is_err());
    assert_eq!(out[1], Ok(DeviceMsg::Ack(Ack { id: 7 })));
}

fn arb_sample() -> impl Strategy<Value = Sample> {
    (
        any::<u8>(),
        any::<u8>(),
        any::<i16>(),
        any::<i16>(),
        any::<u32>(),
        any::<u8>(),
    )
        .prop_map(
            |(seq_lo, status, hall_code, probe_code, thermo, duty)| Sample {
                seq_lo,
                status: SampleStatus(status),
                hall_code,
                probe_code,
                thermo: ThermoWord(thermo),
                duty,
            },
        )
}

fn arb_device_msg() -> impl Strategy<Value = DeviceMsg> {
    prop_oneof![
        arb_sample().prop_map(DeviceMsg::Sample),
        (
            any::<u32>(),
            any::<u32>(),
            any::<u32>(),
            any::<u16>(),
            any::<u32>(),
            any::<i16>()
        )
            .prop_map(
                |(seq, epoch_seq, epoch_ms, period_ms, dropped_total, setpoint_tenth_c)| {
                    DeviceMsg::Beacon(Beacon {
                        seq,
                        epoch_seq,
                        epoch_ms,
                        period_ms,
                        dropped_total,
                        state: RunState::Manual,
                        setpoint_tenth_c,
                    })
                }
            ),
        any::<u16>().prop_map(|id| DeviceMsg::Ack(Ack { id })),
        (any::<u32>(), any::<i16>(), 0usize..4).prop_map(|(time_ms, temp_tenth_c, k)| {
            let fault = [
                Fault::StuckReading,
                Fault::ConverterImplausible,
                Fault::HeatingWhileOff,
                Fault::Crashed,
            ][k];
            DeviceMsg::Fault(FaultReport {
                time_ms,
                fault,
                temp_tenth_c,
            })
        }),
    ]
}

fn arb_host_msg() -> impl Strategy<Value = HostMsg> {
    let seg = (any::<i16>(), any::<u16>(), any::<u32>()).prop_map(|(t, r, h)| Segment {
        target_tenth_c: t,
        ramp_tenth_c_per_min: r,
        hold_s: h,
    });
    let command = prop_oneof![
        (
            any::<i16>(),
            proptest::collection::vec(seg, 0..=MAX_SEGMENTS)
        )
            .prop_map(|(limit, segs)| {
                Command::Start(Profile {
                    limit_tenth_c: limit,
                    segments: Segments(heapless::Vec::from_slice(&segs).unwrap()),
                })
            }),
        (any::<i16>(), any::<i16>()).prop_map(|(s, l)| Command::Manual {
            setpoint_tenth_c: s,
            limit_tenth_c: l
        }),
        Just(Command::Heartbeat),
        Just(Command::Stop),
        Just(Command::Drill(Drill::Panic)),
        (any::<u16>(), any::<u8>()).prop_map(|(p, o)| Command::Configure(SamplingConfig {
            period_ms: p,
            oversample: o
        })),
    ];
    (any::<u16>(), command).prop_map(|(id, command)| HostMsg { id, command })
}

/// Corruptions applied to one frame of a stream.
#[derive(Debug, Clone)]
enum Damage {
    None,
    FlipBit { at: usize, bit: u8 },
    Drop { at: usize },
    InsertZero { at: usize },
    Truncate { keep: usize },
}

fn arb_damage() -> impl Strategy<Value = Damage> {
    prop_oneof![
        3 => Just(Damage::None),
        2 => (any::<usize>(), 0u8..8).prop_map(|(at, bit)| Damage::FlipBit { at, bit }),
        1 => any::<usize>().prop_map(|at| Damage::Drop { at }),
        1 => any::<usize>().prop_map(|at| Damage::InsertZero { at }),
        1 => any::<usize>().prop_map(|keep| Damage::Truncate { keep }),
    ]
}

proptest! {
    #[test]
    fn device_messages_round_trip(msg in arb_device_msg()) {
        let frame = frame_of(&msg);
        prop_assert!(frame.len() <= MAX_DEVICE_FRAME);
        prop_assert_eq!(frame.iter().filter(|&&b| b == 0).count(), 1, "only the delimiter is zero");
        let mut dec = DeviceDecoder::for_device_msgs();
        let mut out = Vec::new();
        dec.feed(&frame, |r| out.push(r));
        prop_assert_eq!(out, vec![Ok(msg)]);
    }

    #[test]
    fn host_messages_round_trip(msg in arb_host_msg()) {
        let frame = frame_of(&msg);
        prop_assert!(frame.len() <= MAX_HOST_FRAME);
        let mut dec = HostDecoder::for_host_msgs();
        let mut out = Vec::new();
        dec.feed(&frame, |r| out.push(r));
        prop_assert_eq!(out, vec![Ok(msg)]);
    }

    /// A stream of frames, some damaged, fed in random chunk sizes: every intact frame comes
    /// out in order, no damaged frame comes out as a message, none is invented.
    #[test]
    fn corrupted_streams_lose_only_the_damaged_frames(
        frames in proptest::collection::vec((arb_device_msg(), arb_damage()), 1..40),
        chunks in proptest::collection::vec(1usize..64, 1..20),
    ) {
        let mut stream = Vec::new();
        let mut intact = Vec::new();
        for (msg, damage) in &frames {
            let mut f = frame_of(msg);
            let body = f.len() - 1; // never touch the delimiter itself
            let changed = match *damage {
                Damage::None => false,
                Damage::FlipBit { at, bit } => { f[at % body] ^= 1 << bit; true }
                Damage::Drop { at } => { f.remove(at % body); true }
                // a zero in front of a frame is only an idle delimiter, so insert inside it
                Damage::InsertZero { at } => { f.insert(1 + at % (body - 1), 0); true }
                Damage::Truncate { keep } => { f.truncate(keep % body); true }
            };
            if !changed {
                intact.push(msg.clone());
            }
            stream.extend_from_slice(&f);
        }
        // a truncated last frame would swallow nothing after it; end the stream cleanly
        stream.push(0);
        let mut dec = DeviceDecoder::for_device_msgs();
        let mut decoded = Vec::new();
        let mut pos = 0;
        let mut i = 0;
        while pos < stream.len() {
            let n = chunks[i % chunks.len()].min(stream.len() - pos);
            dec.feed(&stream[pos..pos + n], |r| if let Ok(m) = r { decoded.push(m) });
            pos += n;
            i += 1;
        }
        // Damaged frames may merge with a neighbour (a truncated frame joins the next one) and
        // then fail their CRC; rarely two damages cancel out and rebuild a sent frame byte for
        // byte. So: every decoded message is one that was sent, in order (none invented), and
        // intact frames are lost only where a truncation merged them.
        let mut it = frames.iter().map(|(m, _)| m);
        for m in &decoded {
            prop_assert!(it.any(|x| x == m), "decoded a message that was never sent: {:?}", m);
        }
        let merged = frames.iter().filter(|(_, d)| matches!(d, Damage::Truncate { .. })).count();
        prop_assert!(decoded.len() + merged >= intact.len(),
            "lost more intact frames ({} of {}) than truncations ({})", intact.len() - decoded.len(), intact.len(), merged);
    }
}
