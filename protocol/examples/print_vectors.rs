//! Prints the frame of every example message (used to write the golden vectors once).
use remanent_protocol::*;

fn main() {
    for (name, msg) in examples::device() {
        let mut buf = [0u8; MAX_FRAME];
        println!("{name}: {:02x?}", encode(&msg, &mut buf).unwrap());
    }
    for (name, msg) in examples::host() {
        let mut buf = [0u8; MAX_FRAME];
        println!("{name}: {:02x?}", encode(&msg, &mut buf).unwrap());
    }
}
