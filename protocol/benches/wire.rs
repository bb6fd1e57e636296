//! Wire benchmark: bytes per sample frame, samples/s a serial link carries, and encode and
//! decode throughput on one core. Prints a table; targets are checked here, not in tests.
//!
//! Run: `cargo bench -p remanent-protocol`

use std::hint::black_box;
use std::time::Instant;

use remanent_protocol::decoder::DeviceDecoder;
use remanent_protocol::*;

const FRAMES: usize = 2_000_000;

fn samples() -> Vec<DeviceMsg> {
    // a slowly warming magnet: realistic codes, not all-zero
    (0..FRAMES)
        .map(|i| {
            let t = i as f32 * 0.01;
            DeviceMsg::Sample(Sample {
                seq_lo: i as u8,
                status: SampleStatus::new(true, false, (i % 3) as u32),
                hall_code: (12_000.0 - t * 2.0) as i16,
                probe_code: 16_000 + (i % 7) as i16,
                thermo: ThermoWord::from_parts((100.0 + t) as i16, 392, None),
                duty: (i % 200) as u8,
            })
        })
        .collect()
}

fn main() {
    let msgs = samples();
    let mut stream = Vec::with_capacity(FRAMES * 16);
    let mut buf = [0u8; MAX_FRAME];

    let start = Instant::now();
    for m in &msgs {
        let f = encode(black_box(m), &mut buf).unwrap();
        stream.extend_from_slice(f);
    }
    let encode_s = start.elapsed().as_secs_f64();
    let bytes_per_frame = stream.len() as f64 / FRAMES as f64;
    let max_frame = {
        let mut max = 0;
        for m in msgs.iter().take(100_000) {
            max = max.max(encode(m, &mut buf).unwrap().len());
        }
        max
    };

    let mut dec = DeviceDecoder::for_device_msgs();
    let mut good = 0usize;
    let start = Instant::now();
    for chunk in stream.chunks(4096) {
        dec.feed(black_box(chunk), |r| {
            if r.is_ok() {
                good += 1
            }
        });
    }
    let decode_s = start.elapsed().as_secs_f64();
    assert_eq!(good, FRAMES);

    let baud_bytes_per_s = 115_200.0 / 10.0; // 8N1: ten bit times a byte
    let link_rate = baud_bytes_per_s / bytes_per_frame;
    let enc_rate = FRAMES as f64 / encode_s;
    let dec_rate = FRAMES as f64 / decode_s;
    println!("| measure | value | target |");
    println!("|---|---|---|");
    println!("| sample frame, mean bytes on the wire | {bytes_per_frame:.2} | ≤ 16 |");
    println!("| sample frame, largest seen | {max_frame} | ≤ 16 |");
    println!("| samples/s at 115200 baud 8N1 | {link_rate:.0} | ≥ 700 |");
    println!(
        "| encode, frames/s (one core) | {:.2} M | — |",
        enc_rate / 1e6
    );
    println!(
        "| decode, frames/s (one core) | {:.2} M | ≥ 5 M |",
        dec_rate / 1e6
    );
    println!(
        "| decode, MB/s | {:.0} | — |",
        stream.len() as f64 / decode_s / 1e6
    );
    let ok = max_frame <= 16 && link_rate >= 700.0 && dec_rate >= 5e6;
    println!("\ntargets {}", if ok { "met" } else { "NOT met" });
}
