//! The header block of a C3D file (C3D user guide, c3d.org, "The header section"): the first
//! 512 bytes. Byte 1 is the parameter section's block number, byte 2 is 0x50; then 16-bit words
//! (in the processor's byte order, read from the parameter section first).
//!
//! | word | content |
//! |---|---|
//! | 2 | number of 3-D points |
//! | 3 | analog values per 3-D frame (channels x samples per frame) |
//! | 4, 5 | first and last frame number (1-based, at most 65 535) |
//! | 6 | largest interpolation gap, in frames |
//! | 7-8 | POINT:SCALE (float) |
//! | 9 | first block of the data section |
//! | 10 | analog samples per channel per 3-D frame |
//! | 11-12 | 3-D frame rate, Hz (float) |
//!
//! Events (words 150 on) are not read. The parameter section repeats each of these facts and,
//! where they disagree, wins (the reader says so in a warning).

use super::numbers::Processor;

/// The second byte of every C3D file.
pub const MAGIC: u8 = 0x50;

/// Bytes in a block.
pub const BLOCK: usize = 512;

/// The header words the reader uses.
#[derive(Clone, Debug, PartialEq, serde::Serialize)]
pub struct Header {
    pub parameter_block: u8,
    pub n_points: u16,
    pub analog_per_frame: u16,
    pub first_frame: u16,
    pub last_frame: u16,
    pub max_gap_frames: u16,
    pub scale: f32,
    pub data_start_block: u16,
    pub analog_samples_per_frame: u16,
    pub rate_hz: f32,
}

impl Header {
    /// Reads the first 24 bytes of `block` (at least that long) in the byte order of
    /// `processor`.
    pub fn parse(block: &[u8], processor: Processor) -> Option<Header> {
        let b = block.get(..24)?;
        let word = |i: usize| processor.u16([b[2 * i - 2], b[2 * i - 1]]);
        let float = |i: usize| {
            let k = 2 * i - 2;
            processor.f32([b[k], b[k + 1], b[k + 2], b[k + 3]])
        };
        Some(Header {
            parameter_block: b[0],
            n_points: word(2),
            analog_per_frame: word(3),
            first_frame: word(4),
            last_frame: word(5),
            max_gap_frames: word(6),
            scale: float(7),
            data_start_block: word(9),
            analog_samples_per_frame: word(10),
            rate_hz: float(11),
        })
    }

    /// Frames from the header's first and last frame numbers (0 when last < first).
    pub fn n_frames(&self) -> usize {
        if self.last_frame >= self.first_frame {
            (self.last_frame - self.first_frame) as usize + 1
        } else {
            0
        }
    }

    /// The 512 bytes of a header block holding these words.
    pub fn encode(&self, processor: Processor) -> Option<Vec<u8>> {
        let mut b = vec![0u8; BLOCK];
        b[0] = self.parameter_block;
        b[1] = MAGIC;
        let mut word = |i: usize, v: u16| {
            b[2 * i - 2..2 * i].copy_from_slice(&processor.u16_bytes(v));
        };
        word(2, self.n_points);
        word(3, self.analog_per_frame);
        word(4, self.first_frame);
        word(5, self.last_frame);
        word(6, self.max_gap_frames);
        word(9, self.data_start_block);
        word(10, self.analog_samples_per_frame);
        b[12..16].copy_from_slice(&processor.f32_bytes(self.scale)?);
        b[20..24].copy_from_slice(&processor.f32_bytes(self.rate_hz)?);
        Some(b)
    }
}
