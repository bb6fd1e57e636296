//! Fuzz the streaming decoders: arbitrary bytes in arbitrary chunks must never panic, and any
//! message that decodes must re-encode to a frame that decodes to itself.
#![no_main]

use libfuzzer_sys::fuzz_target;
use remanent_protocol::decoder::{DeviceDecoder, HostDecoder};
use remanent_protocol::{encode, MAX_FRAME};

fuzz_target!(|data: &[u8]| {
    let split = data.first().map(|b| *b as usize % 17 + 1).unwrap_or(1);
    let mut dev = DeviceDecoder::for_device_msgs();
    let mut host = HostDecoder::for_host_msgs();
    for chunk in data.chunks(split) {
        dev.feed(chunk, |r| {
            if let Ok(msg) = r {
                let mut buf = [0u8; MAX_FRAME];
                let frame = encode(&msg, &mut buf).expect("a decoded message re-encodes");
                let mut again = DeviceDecoder::for_device_msgs();
                let mut out = None;
                again.feed(frame, |r2| out = Some(r2));
                assert_eq!(out, Some(Ok(msg)));
            }
        });
        host.feed(chunk, |_| {});
    }
});
