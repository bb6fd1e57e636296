//! UF2 encoding (Microsoft's USB Flashing Format): a flat image split into 512-byte blocks of
//! 256 payload bytes, each naming its flash address, so a board's USB boot loader can flash a
//! file dropped onto its mass-storage drive.

/// First magic word of a block.
pub const MAGIC_START0: u32 = 0x0A32_4655;
/// Second magic word.
pub const MAGIC_START1: u32 = 0x9E5D_5157;
/// Final magic word.
pub const MAGIC_END: u32 = 0x0AB1_6F30;
/// Flag: the family id field is present.
pub const FLAG_FAMILY_ID: u32 = 0x0000_2000;
/// Family id of the RP2040.
pub const FAMILY_RP2040: u32 = 0xE48B_FF56;
/// Payload bytes per block.
pub const PAYLOAD: usize = 256;

/// Encode `image`, to be written at `base`, as UF2 blocks.
pub fn encode(image: &[u8], base: u32, family: u32) -> Vec<u8> {
    let chunks: Vec<&[u8]> = image.chunks(PAYLOAD).collect();
    let total = chunks.len() as u32;
    let mut out = Vec::with_capacity(chunks.len() * 512);
    for (i, chunk) in chunks.iter().enumerate() {
        let words = [
            MAGIC_START0,
            MAGIC_START1,
            FLAG_FAMILY_ID,
            base + (i * PAYLOAD) as u32,
            PAYLOAD as u32,
            i as u32,
            total,
            family,
        ];
        for w in words {
            out.extend_from_slice(&w.to_le_bytes());
        }
        let mut data = [0u8; 476];
        data[..chunk.len()].copy_from_slice(chunk);
        out.extend_from_slice(&data);
        out.extend_from_slice(&MAGIC_END.to_le_bytes());
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    // Block layout and magic numbers from the UF2 specification (github.com/microsoft/uf2,
    // README "File format"): 32-byte header, 476 data bytes, final magic, 512 bytes in all.
    #[test]
    fn blocks_follow_the_specification() {
        let image: Vec<u8> = (0..600u32).map(|i| i as u8).collect();
        let uf2 = encode(&image, 0x1000_0000, FAMILY_RP2040);
        assert_eq!(uf2.len(), 3 * 512);
        let word = |b: usize, w: usize| {
            u32::from_le_bytes(
                uf2[b * 512 + 4 * w..b * 512 + 4 * w + 4]
                    .try_into()
                    .unwrap(),
            )
        };
        for b in 0..3 {
            assert_eq!(word(b, 0), 0x0A32_4655);
            assert_eq!(word(b, 1), 0x9E5D_5157);
            assert_eq!(word(b, 3), 0x1000_0000 + 256 * b as u32);
            assert_eq!(word(b, 4), 256);
            assert_eq!(word(b, 5), b as u32);
            assert_eq!(word(b, 6), 3);
            assert_eq!(word(b, 7), 0xE48B_FF56);
            assert_eq!(word(b, 127), 0x0AB1_6F30);
        }
        assert_eq!(&uf2[512 + 32..512 + 32 + 256], &image[256..512]);
        assert!(
            uf2[2 * 512 + 32 + 88..2 * 512 + 32 + 476]
                .iter()
                .all(|&b| b == 0),
            "padding is zero"
        );
    }
}
