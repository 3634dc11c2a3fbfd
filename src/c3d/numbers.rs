//! The three processor types of a C3D file and their numbers: Intel (little-endian IEEE),
//! DEC (little-endian integers, VAX F_floating floats) and MIPS/SGI (big-endian IEEE), from the
//! C3D user guide (c3d.org) and the VAX architecture's F_floating format (Digital Equipment
//! Corporation, VAX Architecture Reference Manual: sign-magnitude, bit 15 the sign, bits 14:7 an
//! excess-128 exponent, a hidden leading bit before a `0.1f` mantissa, the two 16-bit words in
//! PDP-11 order).

/// Processor type, byte 4 of the parameter section minus 83.
#[derive(Clone, Copy, Debug, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Processor {
    /// 84: little-endian integers, IEEE floats.
    Intel,
    /// 85: little-endian integers, VAX F_floating floats.
    Dec,
    /// 86: big-endian integers and IEEE floats.
    Mips,
}

impl Processor {
    /// The processor of a parameter-section byte 4 (84, 85 or 86).
    pub fn from_byte(byte: u8) -> Option<Processor> {
        match byte {
            84 => Some(Processor::Intel),
            85 => Some(Processor::Dec),
            86 => Some(Processor::Mips),
            _ => None,
        }
    }

    /// The parameter-section byte 4 of this processor.
    pub fn byte(self) -> u8 {
        match self {
            Processor::Intel => 84,
            Processor::Dec => 85,
            Processor::Mips => 86,
        }
    }

    /// A name for messages and comment lines.
    pub fn name(self) -> &'static str {
        match self {
            Processor::Intel => "intel",
            Processor::Dec => "dec",
            Processor::Mips => "mips",
        }
    }

    /// A 16-bit signed integer from its two file bytes.
    #[inline]
    pub fn i16(self, b: [u8; 2]) -> i16 {
        match self {
            Processor::Mips => i16::from_be_bytes(b),
            _ => i16::from_le_bytes(b),
        }
    }

    /// A 16-bit unsigned integer from its two file bytes.
    #[inline]
    pub fn u16(self, b: [u8; 2]) -> u16 {
        match self {
            Processor::Mips => u16::from_be_bytes(b),
            _ => u16::from_le_bytes(b),
        }
    }

    /// A 32-bit float from its four file bytes.
    #[inline]
    pub fn f32(self, b: [u8; 4]) -> f32 {
        match self {
            Processor::Intel => f32::from_le_bytes(b),
            Processor::Mips => f32::from_be_bytes(b),
            Processor::Dec => dec_to_f32(b),
        }
    }

    /// The two file bytes of a 16-bit integer.
    pub fn i16_bytes(self, v: i16) -> [u8; 2] {
        match self {
            Processor::Mips => v.to_be_bytes(),
            _ => v.to_le_bytes(),
        }
    }

    /// The two file bytes of a 16-bit unsigned integer.
    pub fn u16_bytes(self, v: u16) -> [u8; 2] {
        match self {
            Processor::Mips => v.to_be_bytes(),
            _ => v.to_le_bytes(),
        }
    }

    /// The four file bytes of a float; `None` when DEC cannot hold it (beyond about 1.7e38;
    /// values below its smallest normal, about 2.9e-39, become 0).
    pub fn f32_bytes(self, v: f32) -> Option<[u8; 4]> {
        match self {
            Processor::Intel => Some(v.to_le_bytes()),
            Processor::Mips => Some(v.to_be_bytes()),
            Processor::Dec => f32_to_dec(v),
        }
    }
}

/// A VAX F_floating value from its four file bytes `b0 b1 b2 b3`.
///
/// The first 16-bit word (`b1 b0`, little-endian) holds the sign (bit 15), the excess-128
/// exponent (bits 14:7) and the top 7 mantissa bits; the second word (`b3 b2`) the low 16. The
/// value is `(-1)^s * 0.1f * 2^(e - 128)`, i.e. `1.f * 2^(e - 129)`, two powers of two below the
/// IEEE value with the same bit fields. An exponent of 0 is zero (with the sign bit set it is
/// the VAX "reserved operand", read here as 0 too).
///
/// ```
/// use gravline::c3d::numbers::dec_to_f32;
/// assert_eq!(dec_to_f32([0x80, 0x40, 0x00, 0x00]), 1.0);
/// assert_eq!(dec_to_f32([0x20, 0xc1, 0x00, 0x00]), -2.5);
/// ```
#[inline]
pub fn dec_to_f32(b: [u8; 4]) -> f32 {
    let bits = u32::from_le_bytes([b[2], b[3], b[0], b[1]]);
    let exponent = (bits >> 23) & 0xff;
    if exponent == 0 {
        return 0.0;
    }
    if exponent > 2 {
        // The IEEE value with the same fields is normal and 4 times the VAX value: dividing by
        // 4 only lowers the exponent, exactly.
        f32::from_bits(bits - (2 << 23))
    } else {
        // Exponents 1 and 2 are below IEEE's normal range after the shift: go through f64.
        let mantissa = 1.0 + (bits & 0x7f_ffff) as f64 / (1u64 << 23) as f64;
        let v = mantissa * 2f64.powi(exponent as i32 - 129);
        (if bits >> 31 == 1 { -v } else { v }) as f32
    }
}

/// The four DEC file bytes of an IEEE float (the inverse of [`dec_to_f32`]); `None` for a value
/// DEC cannot hold (infinite, NaN, or at least 2^127). Values below DEC's smallest normal
/// (2^-128) become 0.
///
/// ```
/// use gravline::c3d::numbers::f32_to_dec;
/// assert_eq!(f32_to_dec(1000.0), Some([0x7a, 0x45, 0x00, 0x00]));
/// ```
pub fn f32_to_dec(v: f32) -> Option<[u8; 4]> {
    if !v.is_finite() {
        return None;
    }
    if v.abs() < 2f32.powi(-126) {
        // Below IEEE's normal range (and DEC's smallest is 2^-128): zero.
        return Some([0; 4]);
    }
    let bits = v.to_bits();
    let exponent = (bits >> 23) & 0xff;
    if exponent >= 0xfe {
        return None;
    }
    let dec = bits + (2 << 23);
    let c = dec.to_le_bytes();
    Some([c[2], c[3], c[0], c[1]])
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Check bytes derived from the VAX F_floating definition (value = 0.1f x 2^(e-128)):
    /// 1.0 is 0.1b x 2^1, exponent 129 = 0x81: word 0x4080, file bytes 80 40 00 00.
    #[test]
    fn dec_check_bytes() {
        let cases: [(f32, [u8; 4]); 4] = [
            (1.0, [0x80, 0x40, 0x00, 0x00]),
            (-2.5, [0x20, 0xc1, 0x00, 0x00]),
            (1000.0, [0x7a, 0x45, 0x00, 0x00]),
            (0.083_333_3, [0xaa, 0x3e, 0xa6, 0xaa]),
        ];
        for (v, bytes) in cases {
            assert_eq!(dec_to_f32(bytes), v, "{bytes:02x?}");
            assert_eq!(f32_to_dec(v), Some(bytes), "{v}");
        }
        assert_eq!(dec_to_f32([0; 4]), 0.0);
        assert_eq!(f32_to_dec(0.0), Some([0; 4]));
        assert_eq!(f32_to_dec(f32::MAX), None);
    }

    #[test]
    fn dec_round_trips_and_handles_tiny_exponents() {
        for v in [1.5e-30f32, -3.25, 123_456.79, 1e37, -7.0e-20] {
            assert_eq!(dec_to_f32(f32_to_dec(v).unwrap()), v);
        }
        // Exponent 1: 0.1b x 2^-127 = 2^-128.
        assert_eq!(
            dec_to_f32([0x80, 0x00, 0x00, 0x00]),
            f32::from_bits(1 << 21)
        );
        // Exponent 255: the largest DEC numbers, beyond IEEE's exponent 254 after the shift.
        assert!(dec_to_f32([0xff, 0x7f, 0xff, 0xff]) > 1.0e38);
    }

    #[test]
    fn processors_read_their_byte_orders() {
        assert_eq!(Processor::Intel.i16([0x01, 0x02]), 0x0201);
        assert_eq!(Processor::Dec.i16([0x01, 0x02]), 0x0201);
        assert_eq!(Processor::Mips.i16([0x01, 0x02]), 0x0102);
        assert_eq!(Processor::Mips.f32(1.0f32.to_be_bytes()), 1.0);
        for p in [Processor::Intel, Processor::Dec, Processor::Mips] {
            assert_eq!(Processor::from_byte(p.byte()), Some(p));
            assert_eq!(p.f32(p.f32_bytes(-12.75).unwrap()), -12.75);
            assert_eq!(p.i16(p.i16_bytes(-300)), -300);
        }
    }
}
