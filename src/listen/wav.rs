//! WAV files (RIFF, one channel of 32-bit IEEE float samples, format tag 3):
//! the layout every audio program and browser reads. Written by hand: it is
//! a 44-byte header (plus the `fact` chunk float files carry) and the
//! samples, little-endian.

/// The bytes of a mono 32-bit float WAV file.
pub fn float_wav(rate: u32, samples: &[f32]) -> Vec<u8> {
    let data_len = (samples.len() * 4) as u32;
    let mut b = Vec::with_capacity(58 + samples.len() * 4);
    b.extend_from_slice(b"RIFF");
    b.extend_from_slice(&(4 + 26 + 12 + 8 + data_len).to_le_bytes());
    b.extend_from_slice(b"WAVE");
    // fmt chunk: 18 bytes (extension size 0) for a non-PCM format
    b.extend_from_slice(b"fmt ");
    b.extend_from_slice(&18u32.to_le_bytes());
    b.extend_from_slice(&3u16.to_le_bytes()); // IEEE float
    b.extend_from_slice(&1u16.to_le_bytes()); // channels
    b.extend_from_slice(&rate.to_le_bytes());
    b.extend_from_slice(&(rate * 4).to_le_bytes()); // bytes per second
    b.extend_from_slice(&4u16.to_le_bytes()); // block align
    b.extend_from_slice(&32u16.to_le_bytes()); // bits per sample
    b.extend_from_slice(&0u16.to_le_bytes()); // extension size
    b.extend_from_slice(b"fact");
    b.extend_from_slice(&4u32.to_le_bytes());
    b.extend_from_slice(&(samples.len() as u32).to_le_bytes());
    b.extend_from_slice(b"data");
    b.extend_from_slice(&data_len.to_le_bytes());
    for s in samples {
        b.extend_from_slice(&s.to_le_bytes());
    }
    b
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn header_sizes_add_up() {
        let w = float_wav(48000, &[0.0, 0.5, -0.5]);
        assert_eq!(&w[0..4], b"RIFF");
        assert_eq!(
            u32::from_le_bytes([w[4], w[5], w[6], w[7]]) as usize,
            w.len() - 8
        );
        assert_eq!(&w[8..16], b"WAVEfmt ");
        assert_eq!(w.len(), 58 + 12);
        assert_eq!(f32::from_le_bytes([w[62], w[63], w[64], w[65]]), 0.5);
    }
}
