//! `remanent-uf2 IMAGE.bin BASE_HEX OUT.uf2`: wrap a flat image for the RP2040's USB boot loader.

fn main() -> std::process::ExitCode {
    let args: Vec<String> = std::env::args().collect();
    if args.len() != 4 {
        eprintln!("usage: remanent-uf2 IMAGE.bin BASE_ADDRESS_HEX OUT.uf2");
        return std::process::ExitCode::from(2);
    }
    let image = match std::fs::read(&args[1]) {
        Ok(b) => b,
        Err(e) => {
            eprintln!("cannot read {}: {e}", args[1]);
            return std::process::ExitCode::from(2);
        }
    };
    let Ok(base) = u32::from_str_radix(args[2].trim_start_matches("0x"), 16) else {
        eprintln!("{} is not a hexadecimal address", args[2]);
        return std::process::ExitCode::from(2);
    };
    let uf2 = remanent_uf2::encode(&image, base, remanent_uf2::FAMILY_RP2040);
    if let Err(e) = std::fs::write(&args[3], &uf2) {
        eprintln!("cannot write {}: {e}", args[3]);
        return std::process::ExitCode::from(2);
    }
    println!(
        "{}: {} bytes in {} blocks at {base:#010x}",
        args[3],
        image.len(),
        uf2.len() / 512
    );
    std::process::ExitCode::SUCCESS
}
