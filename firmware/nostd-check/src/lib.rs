//! A `no_std` static library that links the firmware crates and brings its own panic handler.
//! If `std` reaches any of them through a dependency, its panic handler collides with this one
//! and the build fails ("found duplicate lang item `panic_impl`").
#![no_std]

use core::panic::PanicInfo;

/// Referenced so the firmware code is actually linked.
#[no_mangle]
pub extern "C" fn remanent_nostd_check_frame_len() -> usize {
    let mut buf = [0u8; remanent_protocol::MAX_FRAME];
    let sample = remanent_protocol::examples::sample();
    let len = remanent_protocol::encode(&remanent_protocol::DeviceMsg::Sample(sample), &mut buf)
        .map(|f| f.len())
        .unwrap_or(0);
    len + core::mem::size_of::<remanent_firmware::sampler::Sampler>()
        + core::mem::size_of::<remanent_rig_model::Rig>()
}

#[panic_handler]
fn panic(_info: &PanicInfo) -> ! {
    loop {}
}
