//! Ground floor, below every stage: reading the small text inputs (configuration, subject,
//! manifest, segment table, batch summary) as bounded regular files, and quoting input in
//! one-line error messages. No units, no formulas.
//!
//! Two rules every reader of user files follows through this module:
//! - **Memory is bounded by what the file is, not by what it says.** [`read_regular`] refuses
//!   anything but a regular file (a FIFO, a device such as `/dev/zero`, a socket would block or
//!   never end) before opening it, and reads at most a stated number of bytes; a larger file is
//!   an error naming the limit, not an allocation the machine cannot give.
//! - **An error quotes at most a short excerpt of the input, on one line.** [`quote`] escapes
//!   line breaks and control characters and cuts the text at [`QUOTE_CHARS`] characters;
//!   [`one_line`] does the same to a whole message (a parser's message may carry the offending
//!   line, however long).

use std::io::{self, Read};
use std::path::Path;

/// Largest configuration or subject file read (TOML; a real one is a few kilobytes).
pub const MAX_CONFIG_BYTES: u64 = 4 << 20;
/// Largest segment table file read (CSV; a real one has a few dozen rows).
pub const MAX_TABLE_BYTES: u64 = 4 << 20;
/// Largest manifest or `subjects.csv` read (a row takes about 100 bytes: millions of trials).
pub const MAX_MANIFEST_BYTES: u64 = 512 << 20;
/// Largest batch summary table read by `merge` (a row takes about 1.5 kB).
pub const MAX_SUMMARY_BYTES: u64 = 2 << 30;

/// Characters of input an error message quotes before cutting it with `...`.
pub const QUOTE_CHARS: usize = 60;
/// Characters of a whole message (a parser's, or a batch row's) before it is cut.
pub const MESSAGE_CHARS: usize = 400;

/// Checks that `path` names a regular file (symbolic links followed), without opening it:
/// opening a FIFO blocks until someone writes to it.
pub fn require_regular(path: &Path) -> io::Result<std::fs::Metadata> {
    let meta = std::fs::metadata(path)?;
    if meta.is_file() {
        return Ok(meta);
    }
    Err(io::Error::new(
        io::ErrorKind::InvalidInput,
        format!("{}; give a regular file", kind_of(&meta)),
    ))
}

fn kind_of(meta: &std::fs::Metadata) -> &'static str {
    let t = meta.file_type();
    if t.is_dir() {
        return "a folder, not a file";
    }
    #[cfg(unix)]
    {
        use std::os::unix::fs::FileTypeExt;
        if t.is_fifo() {
            return "a pipe (FIFO), not a regular file";
        }
        if t.is_char_device() || t.is_block_device() {
            return "a device, not a regular file";
        }
        if t.is_socket() {
            return "a socket, not a regular file";
        }
    }
    "not a regular file"
}

/// Reads a regular file of at most `max_bytes` bytes. A FIFO, a device or a folder is refused
/// before it is opened; a file that is (or grows while read) larger than `max_bytes` is
/// refused after reading at most `max_bytes + 1` bytes. The errors are one line and say the
/// fix; callers add the path.
///
/// ```
/// use gravline::textio::read_regular;
/// let e = read_regular(std::path::Path::new("/dev/zero"), 1 << 20).unwrap_err();
/// assert!(e.to_string().contains("a device"));
/// ```
pub fn read_regular(path: &Path, max_bytes: u64) -> io::Result<Vec<u8>> {
    let meta = require_regular(path)?;
    if meta.len() > max_bytes {
        return Err(too_large(max_bytes));
    }
    let file = std::fs::File::open(path)?;
    // Checked again on the open file: the name may have been replaced since.
    if !file.metadata()?.is_file() {
        return Err(io::Error::new(
            io::ErrorKind::InvalidInput,
            "not a regular file; give a regular file",
        ));
    }
    let mut bytes = Vec::with_capacity(meta.len() as usize);
    file.take(max_bytes + 1).read_to_end(&mut bytes)?;
    if bytes.len() as u64 > max_bytes {
        return Err(too_large(max_bytes));
    }
    Ok(bytes)
}

/// [`read_regular`] for a text file: invalid UTF-8 is an error naming the byte offset.
pub fn read_regular_text(path: &Path, max_bytes: u64) -> io::Result<String> {
    String::from_utf8(read_regular(path, max_bytes)?).map_err(|e| {
        io::Error::new(
            io::ErrorKind::InvalidData,
            format!(
                "not UTF-8 text (byte {}); save the file as UTF-8",
                e.utf8_error().valid_up_to()
            ),
        )
    })
}

fn too_large(max_bytes: u64) -> io::Error {
    io::Error::new(
        io::ErrorKind::InvalidData,
        format!(
            "larger than {} (the limit for this kind of file); give the right file",
            bytes_text(max_bytes)
        ),
    )
}

fn bytes_text(n: u64) -> String {
    if n >= 1 << 30 && n.is_multiple_of(1 << 30) {
        format!("{} GiB", n >> 30)
    } else if n >= 1 << 20 && n.is_multiple_of(1 << 20) {
        format!("{} MiB", n >> 20)
    } else {
        format!("{n} bytes")
    }
}

/// Quotes a piece of input for a message: between backticks, line breaks and control
/// characters escaped (`\n`, `\r`, `\t`, `\u{..}`), cut after [`QUOTE_CHARS`] characters with
/// `...`.
///
/// ```
/// use gravline::textio::quote;
/// assert_eq!(quote("male"), "`male`");
/// assert_eq!(quote("ma\nle"), "`ma\\nle`");
/// assert_eq!(quote(&"x".repeat(1000)).chars().count(), 2 + 60 + 3);
/// ```
pub fn quote(text: &str) -> String {
    format!("`{}`", excerpt(text, QUOTE_CHARS))
}

/// `text` with line breaks and control characters escaped, cut after `max_chars` characters
/// (of the escaped text) with `...`.
pub fn excerpt(text: &str, max_chars: usize) -> String {
    let mut out = String::new();
    let mut count = 0;
    for c in text.chars() {
        let piece = escape_char(c);
        let n = piece.chars().count();
        if count + n > max_chars {
            out.push_str("...");
            return out;
        }
        out.push_str(&piece);
        count += n;
    }
    out
}

fn escape_char(c: char) -> String {
    match c {
        '\n' => "\\n".into(),
        '\r' => "\\r".into(),
        '\t' => "\\t".into(),
        // Control characters, and the Unicode line and paragraph separators and direction
        // overrides, which would break or reorder a terminal line.
        c if c.is_control()
            || matches!(c, '\u{2028}' | '\u{2029}' | '\u{202a}'..='\u{202e}' | '\u{2066}'..='\u{2069}') =>
        {
            format!("\\u{{{:x}}}", c as u32)
        }
        c => c.to_string(),
    }
}

/// A whole message on one line: runs of whitespace (line breaks included) become one space,
/// other control characters are escaped, and the result is cut after `max_chars` characters
/// with `...`.
///
/// ```
/// use gravline::textio::one_line;
/// assert_eq!(one_line("line 3\n  |\n3 | x = \n", 100), "line 3 | 3 | x =");
/// ```
pub fn one_line(message: &str, max_chars: usize) -> String {
    let mut joined = String::with_capacity(message.len().min(4 * max_chars + 8));
    for word in message.split_whitespace() {
        if !joined.is_empty() {
            joined.push(' ');
        }
        joined.push_str(word);
        if joined.len() > 4 * max_chars + 8 {
            break;
        }
    }
    excerpt(&joined, max_chars)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn quotes_are_short_and_on_one_line() {
        let q = quote(&format!("{}\n{}", "a".repeat(100), "b".repeat(100)));
        assert!(!q.contains('\n'));
        assert!(q.ends_with("...`") || q.ends_with("..."), "{q}");
        assert!(q.chars().count() <= QUOTE_CHARS + 5, "{q}");
        assert_eq!(quote("f\u{0}e\u{1b}[2J"), "`f\\u{0}e\\u{1b}[2J`");
        assert_eq!(quote("a\u{2028}b"), "`a\\u{2028}b`");
        // Cut on a character boundary, never inside an escape.
        assert_eq!(excerpt("ab\ncd", 3), "ab...");
        assert_eq!(excerpt("é".repeat(5).as_str(), 3), "ééé...");
    }

    #[test]
    fn a_long_message_is_cut() {
        let m = one_line(&"word ".repeat(1_000_000), MESSAGE_CHARS);
        assert_eq!(m.chars().count(), MESSAGE_CHARS + 3);
        assert!(m.ends_with("..."));
    }

    #[test]
    fn a_regular_file_is_read_and_a_large_one_refused() {
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("c.toml");
        std::fs::write(&p, "x = 1\n").unwrap();
        assert_eq!(read_regular_text(&p, 100).unwrap(), "x = 1\n");
        let e = read_regular(&p, 3).unwrap_err().to_string();
        assert!(e.contains("larger than 3 bytes"), "{e}");
        std::fs::write(&p, b"a\xffb").unwrap();
        let e = read_regular_text(&p, 100).unwrap_err().to_string();
        assert!(e.contains("byte 1"), "{e}");
        let e = read_regular(dir.path(), 100).unwrap_err().to_string();
        assert!(e.contains("a folder"), "{e}");
    }

    #[cfg(unix)]
    #[test]
    fn devices_and_pipes_are_refused_without_blocking() {
        let e = read_regular(Path::new("/dev/zero"), 1 << 20)
            .unwrap_err()
            .to_string();
        assert!(e.contains("a device"), "{e}");
        let dir = tempfile::tempdir().unwrap();
        let fifo = dir.path().join("pipe.toml");
        let made = std::process::Command::new("mkfifo")
            .arg(&fifo)
            .status()
            .expect("mkfifo (coreutils) is needed by this test");
        assert!(made.success());
        // Opening a FIFO without a writer would block: this returns at once.
        let e = read_regular(&fifo, 1 << 20).unwrap_err().to_string();
        assert!(e.contains("a pipe (FIFO)"), "{e}");
    }
}
