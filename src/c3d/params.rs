//! The parameter section of a C3D file (C3D user guide, c3d.org, "The parameter section"):
//! a 4-byte header (byte 3 the number of 512-byte blocks, byte 4 = 83 + processor type), then
//! group and parameter records, each:
//!
//! | bytes | content |
//! |---|---|
//! | 1 | name length (`i8`; negative = locked, the absolute value is the length) |
//! | 1 | group id (`i8`; negative for a group record, positive for a parameter of that group) |
//! | n | name |
//! | 2 | offset to the next record, counted from this field (`i16`; 0 = last record) |
//! | 1 | element type, parameters only: -1 char, 1 byte, 2 `i16`, 4 `f32` |
//! | 1 | number of dimensions (0-7), parameters only |
//! | d | dimensions, one unsigned byte each, the first varying fastest |
//! | t | data, parameters only |
//! | 1 | description length, then the description |
//!
//! Names are matched case-insensitively; groups and parameters come in any order. Every read is
//! bounded by the section (and the file), so a corrupted section is an error, never a panic.

use super::numbers::Processor;
use std::collections::HashMap;

/// The data of a parameter, as stored.
#[derive(Clone, Debug, PartialEq)]
pub enum ParamData {
    /// Characters (type -1), the raw bytes.
    Char(Vec<u8>),
    /// Bytes (type 1).
    Byte(Vec<u8>),
    /// 16-bit integers (type 2), as signed; [`Param::u16s`] reads them unsigned.
    Int(Vec<i16>),
    /// 32-bit floats (type 4).
    Float(Vec<f32>),
}

/// One parameter.
#[derive(Clone, Debug, PartialEq)]
pub struct Param {
    /// Group name, upper case.
    pub group: String,
    /// Parameter name, upper case.
    pub name: String,
    /// Stored with a negative name length.
    pub locked: bool,
    /// Dimensions, the first varying fastest (empty for a scalar).
    pub dims: Vec<usize>,
    pub data: ParamData,
    pub description: String,
}

impl Param {
    /// Number of elements.
    pub fn len(&self) -> usize {
        match &self.data {
            ParamData::Char(v) | ParamData::Byte(v) => v.len(),
            ParamData::Int(v) => v.len(),
            ParamData::Float(v) => v.len(),
        }
    }

    /// Whether the parameter holds no element.
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }

    /// The elements as numbers (integers signed, bytes unsigned); `None` for characters.
    pub fn numbers(&self) -> Option<Vec<f64>> {
        match &self.data {
            ParamData::Char(_) => None,
            ParamData::Byte(v) => Some(v.iter().map(|&b| b as f64).collect()),
            ParamData::Int(v) => Some(v.iter().map(|&i| i as f64).collect()),
            ParamData::Float(v) => Some(v.iter().map(|&f| f as f64).collect()),
        }
    }

    /// The elements as unsigned numbers: 16-bit integers read as `u16` (counts, block
    /// numbers), floats as stored.
    pub fn unsigned(&self) -> Option<Vec<f64>> {
        match &self.data {
            ParamData::Int(v) => Some(v.iter().map(|&i| i as u16 as f64).collect()),
            _ => self.numbers(),
        }
    }

    /// The first element as a number.
    pub fn first(&self) -> Option<f64> {
        self.numbers()?.first().copied()
    }

    /// The first element as an unsigned number (see [`Param::unsigned`]).
    pub fn first_unsigned(&self) -> Option<f64> {
        self.unsigned()?.first().copied()
    }

    /// The 16-bit integers read as unsigned.
    pub fn u16s(&self) -> Option<Vec<u16>> {
        match &self.data {
            ParamData::Int(v) => Some(v.iter().map(|&i| i as u16).collect()),
            _ => None,
        }
    }

    /// A character parameter as strings: dimensions `(len, n, ...)` are `n x ...` strings of
    /// `len` characters, each trimmed of surrounding spaces and NULs (invalid UTF-8 replaced);
    /// one or no dimension is one string. `None` for numbers.
    pub fn strings(&self) -> Option<Vec<String>> {
        let ParamData::Char(bytes) = &self.data else {
            return None;
        };
        let text = |b: &[u8]| printable(b);
        if self.dims.len() <= 1 {
            return Some(vec![text(bytes)]);
        }
        let len = self.dims[0];
        if len == 0 {
            let n: usize = self.dims[1..].iter().product();
            return Some(vec![String::new(); n]);
        }
        Some(bytes.chunks(len).map(text).collect())
    }
}

/// Text of a parameter: UTF-8 (invalid bytes replaced), surrounding spaces and NULs trimmed,
/// control characters shown as `?` (so a name or label never breaks a one-line message).
pub fn printable(bytes: &[u8]) -> String {
    String::from_utf8_lossy(bytes)
        .trim_matches(|c: char| c == ' ' || c == '\0')
        .chars()
        .map(|c| if c.is_control() { '?' } else { c })
        .collect()
}

/// Every parameter of a file, by group and name.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Parameters {
    /// Processor type read from the section header.
    pub processor: Option<Processor>,
    /// Group names with their descriptions, by group id.
    pub groups: Vec<(i16, String, String)>,
    /// Parameters in file order.
    pub list: Vec<Param>,
    index: HashMap<(String, String), usize>,
}

impl Parameters {
    /// The parameter `GROUP:NAME` (any case).
    pub fn get(&self, group: &str, name: &str) -> Option<&Param> {
        self.index
            .get(&(group.to_ascii_uppercase(), name.to_ascii_uppercase()))
            .map(|&i| &self.list[i])
    }

    /// Whether the group exists (as a group record or through a parameter).
    pub fn has_group(&self, group: &str) -> bool {
        let g = group.to_ascii_uppercase();
        self.groups.iter().any(|(_, n, _)| *n == g) || self.list.iter().any(|p| p.group == g)
    }

    /// Strings of `GROUP:NAME` followed by `NAME2`, `NAME3`, ... (arrays continued past 255
    /// entries), concatenated.
    pub fn continued_strings(&self, group: &str, name: &str) -> Vec<String> {
        let mut out = Vec::new();
        if let Some(v) = self.get(group, name).and_then(Param::strings) {
            out.extend(v);
        }
        for k in 2.. {
            match self
                .get(group, &format!("{name}{k}"))
                .and_then(Param::strings)
            {
                Some(v) => out.extend(v),
                None => break,
            }
        }
        out
    }

    /// Numbers of `GROUP:NAME` followed by `NAME2`, `NAME3`, ..., concatenated.
    pub fn continued_numbers(&self, group: &str, name: &str, unsigned: bool) -> Vec<f64> {
        let read = |p: &Param| if unsigned { p.unsigned() } else { p.numbers() };
        let mut out = Vec::new();
        if let Some(v) = self.get(group, name).and_then(read) {
            out.extend(v);
        }
        for k in 2.. {
            match self.get(group, &format!("{name}{k}")).and_then(read) {
                Some(v) => out.extend(v),
                None => break,
            }
        }
        out
    }
}

/// Reads the parameter section `section` (from its first byte to the end of its blocks, or of
/// the file). Errors are one line saying what is wrong and where (byte offset in the file,
/// `section_start` being the section's offset).
pub fn parse(section: &[u8], section_start: usize) -> Result<Parameters, String> {
    if section.len() < 4 {
        return Err(format!(
            "the parameter section at byte {section_start} is cut short ({} bytes); the file is truncated",
            section.len()
        ));
    }
    let processor = Processor::from_byte(section[3]).ok_or_else(|| {
        format!(
            "unknown processor type {} in the parameter section (byte {}); a c3d file has 84 (intel), 85 (dec) or 86 (mips)",
            section[3],
            section_start + 3
        )
    })?;
    let mut params = Parameters {
        processor: Some(processor),
        ..Parameters::default()
    };
    let mut raw: Vec<(i16, Param)> = Vec::new();
    let mut pos = 4usize;
    let at = |p: usize| section_start + p;
    let cut = |what: &str, p: usize| {
        format!(
            "the parameter section ends inside a record's {what} (byte {}); the file is truncated or its parameter section corrupted",
            at(p)
        )
    };
    // The section ends where no room is left for another record.
    while let Some(&[len_byte, id_byte]) = section.get(pos..pos + 2) {
        let name_len = (len_byte as i8).unsigned_abs() as usize;
        let locked = (len_byte as i8) < 0;
        let group_id = id_byte as i8;
        if name_len == 0 || group_id == 0 {
            break;
        }
        let name_bytes = section
            .get(pos + 2..pos + 2 + name_len)
            .ok_or_else(|| cut("name", pos + 2))?;
        let name = printable(name_bytes).to_ascii_uppercase();
        let offset_pos = pos + 2 + name_len;
        let offset_bytes = section
            .get(offset_pos..offset_pos + 2)
            .ok_or_else(|| cut("offset", offset_pos))?;
        let offset = processor.i16([offset_bytes[0], offset_bytes[1]]);
        // The end of this record: the next one, or the section's end for the last.
        let next = match offset {
            0 => None,
            o if o < 0 => {
                return Err(format!(
                    "parameter record `{name}` at byte {} points backwards (offset {o}); the parameter section is corrupted",
                    at(pos)
                ))
            }
            o => Some(offset_pos + o as usize),
        };
        let record_end = next.unwrap_or(section.len()).min(section.len());
        let mut p = offset_pos + 2;
        let field = |p: usize, n: usize, what: &str| -> Result<&[u8], String> {
            if p + n > record_end {
                Err(format!(
                    "parameter record `{name}` at byte {}: its {what} runs past the record's end; the parameter section is corrupted",
                    at(pos)
                ))
            } else {
                Ok(&section[p..p + n])
            }
        };
        if group_id < 0 {
            let description = description(section, p, record_end);
            params.groups.push((-(group_id as i16), name, description));
        } else {
            let head = field(p, 2, "type and dimensions")?;
            let (kind, n_dims) = (head[0] as i8, head[1] as usize);
            p += 2;
            let dims: Vec<usize> = field(p, n_dims, "dimensions")?
                .iter()
                .map(|&d| d as usize)
                .collect();
            p += n_dims;
            let count = dims
                .iter()
                .try_fold(1usize, |a, &d| a.checked_mul(d))
                .unwrap_or(usize::MAX / 8);
            let size = match kind {
                -1 | 1 => 1,
                2 => 2,
                4 => 4,
                k => {
                    return Err(format!(
                        "parameter `{name}` at byte {} has element type {k}; a c3d parameter is -1 (char), 1 (byte), 2 (integer) or 4 (float)",
                        at(pos)
                    ))
                }
            };
            if count.saturating_mul(size) > record_end.saturating_sub(p) {
                return Err(format!(
                    "parameter `{name}` at byte {}: its data ({count} elements) run past the record's end; the parameter section is corrupted",
                    at(pos)
                ));
            }
            let bytes = field(p, count * size, "data")?;
            p += count * size;
            let data = match kind {
                -1 => ParamData::Char(bytes.to_vec()),
                1 => ParamData::Byte(bytes.to_vec()),
                2 => ParamData::Int(
                    bytes
                        .chunks_exact(2)
                        .map(|c| processor.i16([c[0], c[1]]))
                        .collect(),
                ),
                _ => ParamData::Float(
                    bytes
                        .chunks_exact(4)
                        .map(|c| processor.f32([c[0], c[1], c[2], c[3]]))
                        .collect(),
                ),
            };
            raw.push((
                group_id as i16,
                Param {
                    group: String::new(),
                    name,
                    locked,
                    dims,
                    data,
                    description: description(section, p, record_end),
                },
            ));
        }
        match next {
            Some(n) if n < section.len() => pos = n,
            _ => break,
        }
    }
    for (id, mut param) in raw {
        let Some((_, group, _)) = params.groups.iter().find(|(g, _, _)| *g == id) else {
            // A parameter of a group that has no record: kept under its number.
            param.group = format!("GROUP{id}");
            push(&mut params, param);
            continue;
        };
        param.group = group.clone();
        push(&mut params, param);
    }
    Ok(params)
}

fn push(params: &mut Parameters, param: Param) {
    let key = (param.group.clone(), param.name.clone());
    // The first record of a name wins (a later duplicate is kept in the list only).
    params.index.entry(key).or_insert(params.list.len());
    params.list.push(param);
}

/// The description at `p` (length byte, then text), or empty when it does not fit the record.
fn description(section: &[u8], p: usize, end: usize) -> String {
    let Some(&n) = section.get(p) else {
        return String::new();
    };
    match section.get(p + 1..p + 1 + n as usize) {
        Some(text) if p + 1 + n as usize <= end => printable(text),
        _ => String::new(),
    }
}

/// Encodes parameters for the writer: groups then their parameters, every record with its
/// offset, a final record with offset 0. `groups` are `(id, name, description)`; parameters
/// refer to groups by name.
pub fn encode(
    processor: Processor,
    groups: &[(i8, &str, &str)],
    params: &[Param],
) -> Result<Vec<u8>, String> {
    let mut records: Vec<Vec<u8>> = Vec::new();
    for (id, name, desc) in groups {
        let mut r = vec![name.len() as u8, (-*id) as u8];
        r.extend_from_slice(name.as_bytes());
        r.extend_from_slice(&[0, 0]);
        r.push(desc.len() as u8);
        r.extend_from_slice(desc.as_bytes());
        records.push(r);
    }
    for p in params {
        let id = groups
            .iter()
            .find(|(_, n, _)| *n == p.group)
            .map(|g| g.0)
            .ok_or_else(|| format!("parameter {}:{} has no group", p.group, p.name))?;
        let len = if p.locked {
            -(p.name.len() as i8)
        } else {
            p.name.len() as i8
        };
        let mut r = vec![len as u8, id as u8];
        r.extend_from_slice(p.name.as_bytes());
        r.extend_from_slice(&[0, 0]);
        let kind: i8 = match p.data {
            ParamData::Char(_) => -1,
            ParamData::Byte(_) => 1,
            ParamData::Int(_) => 2,
            ParamData::Float(_) => 4,
        };
        r.push(kind as u8);
        r.push(p.dims.len() as u8);
        for &d in &p.dims {
            if d > 255 {
                return Err(format!(
                    "parameter {}:{} has a dimension of {d}; at most 255",
                    p.group, p.name
                ));
            }
            r.push(d as u8);
        }
        match &p.data {
            ParamData::Char(v) | ParamData::Byte(v) => r.extend_from_slice(v),
            ParamData::Int(v) => v
                .iter()
                .for_each(|&i| r.extend_from_slice(&processor.i16_bytes(i))),
            ParamData::Float(v) => {
                for &f in v {
                    let b = processor.f32_bytes(f).ok_or_else(|| {
                        format!("{}:{} value {f} cannot be stored", p.group, p.name)
                    })?;
                    r.extend_from_slice(&b);
                }
            }
        }
        r.push(p.description.len() as u8);
        r.extend_from_slice(p.description.as_bytes());
        records.push(r);
    }
    let mut out = Vec::new();
    let n = records.len();
    for (k, mut r) in records.into_iter().enumerate() {
        let name_len = (r[0] as i8).unsigned_abs() as usize;
        let offset_pos = 2 + name_len;
        let offset = if k + 1 == n {
            0
        } else {
            i16::try_from(r.len() - offset_pos)
                .map_err(|_| "a parameter record is longer than 32 kB".to_string())?
        };
        r[offset_pos..offset_pos + 2].copy_from_slice(&processor.i16_bytes(offset));
        out.extend_from_slice(&r);
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn section(records: &[u8], processor: Processor) -> Vec<u8> {
        let mut s = vec![1, 80, 1, processor.byte()];
        s.extend_from_slice(records);
        s.resize(512, 0);
        s
    }

    #[test]
    fn reads_groups_locked_names_and_multi_dimensional_strings() {
        let groups = [(1i8, "POINT", "3-d points")];
        let params = [
            Param {
                group: "POINT".into(),
                name: "LABELS".into(),
                locked: true,
                dims: vec![4, 2],
                data: ParamData::Char(b"HEE LTOE".to_vec()),
                description: "names".into(),
            },
            Param {
                group: "POINT".into(),
                name: "RATE".into(),
                locked: false,
                dims: vec![],
                data: ParamData::Float(vec![120.0]),
                description: String::new(),
            },
        ];
        for processor in [Processor::Intel, Processor::Dec, Processor::Mips] {
            let bytes = encode(processor, &groups, &params).unwrap();
            let parsed = parse(&section(&bytes, processor), 512).unwrap();
            let labels = parsed.get("point", "labels").unwrap();
            assert!(labels.locked);
            assert_eq!(labels.strings().unwrap(), ["HEE", "LTOE"]);
            assert_eq!(labels.description, "names");
            assert_eq!(parsed.get("POINT", "RATE").unwrap().first(), Some(120.0));
        }
    }

    #[test]
    fn corrupted_sections_are_errors_not_panics() {
        let groups = [(1i8, "POINT", "")];
        let params = [Param {
            group: "POINT".into(),
            name: "SCALE".into(),
            locked: false,
            dims: vec![3, 2],
            data: ParamData::Float(vec![1.0; 6]),
            description: String::new(),
        }];
        let bytes = encode(Processor::Intel, &groups, &params).unwrap();
        let full = section(&bytes, Processor::Intel);
        // Every truncation and every single-byte change reads or fails, never panics.
        for n in 0..full.len().min(80) {
            let _ = parse(&full[..n], 512);
            for v in [0u8, 0x7f, 0x80, 0xff] {
                let mut c = full.clone();
                c[n] = v;
                let _ = parse(&c, 512);
            }
        }
        let mut bad = full.clone();
        bad[3] = 99;
        assert!(parse(&bad, 512).unwrap_err().contains("processor type 99"));
    }
}
