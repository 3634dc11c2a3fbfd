//! Confined outputs: a trial's output folder name (its id) comes from its file name, which a
//! manifest can set to anything (`..csv`, `a/../../b.csv`, a name holding a line break or
//! `<script>`). [`sanitize_id`] turns a file stem into a name that is one plain path component
//! on every common file system, and [`trial_dir`] checks, before anything is written, that the
//! folder of an id lies directly under `<out>/trials/` and is not a symbolic link leading
//! elsewhere. No units, no formulas.

use std::path::{Component, Path, PathBuf};

/// Longest id in characters (file systems allow 255 bytes per name; the rest is for suffixes
/// such as `-row12` and for the temporary names of the files inside).
pub const MAX_ID_CHARS: usize = 100;

/// Names Windows reserves whatever the extension (a folder `con` cannot be made there).
const RESERVED: [&str; 22] = [
    "con", "prn", "aux", "nul", "com1", "com2", "com3", "com4", "com5", "com6", "com7", "com8",
    "com9", "lpt1", "lpt2", "lpt3", "lpt4", "lpt5", "lpt6", "lpt7", "lpt8", "lpt9",
];

/// The output id of a trial file stem: letters, digits and `-_.+=@,` are kept, every other
/// character (separators, control characters, spaces, `<>:"|?*`) becomes `_`; a leading or
/// trailing dot becomes `_` (so no id is `.`, `..` or a hidden name); the result is cut at
/// [`MAX_ID_CHARS`] characters; an empty stem gives `trial`.
///
/// ```
/// use gravline::batch::sanitize_id;
/// assert_eq!(sanitize_id("walk_01"), "walk_01");
/// assert_eq!(sanitize_id("."), "_");
/// assert_eq!(sanitize_id(".."), "__");
/// assert_eq!(sanitize_id("a\nb/c"), "a_b_c");
/// assert_eq!(sanitize_id("<script>"), "_script_");
/// ```
pub fn sanitize_id(stem: &str) -> String {
    let mut id: Vec<char> = stem
        .chars()
        .take(MAX_ID_CHARS)
        .map(|c| {
            if c.is_alphanumeric() || "-_.+=@,".contains(c) {
                c
            } else {
                '_'
            }
        })
        .collect();
    if id.is_empty() {
        return "trial".to_string();
    }
    for end in [0, id.len() - 1] {
        if id[end] == '.' {
            id[end] = '_';
        }
    }
    let mut id: String = id.into_iter().collect();
    let base = id
        .split('.')
        .next()
        .unwrap_or_default()
        .to_ascii_lowercase();
    if RESERVED.contains(&base.as_str()) {
        id.insert(0, '_');
    }
    id
}

/// Checks that an id names exactly one plain folder: not empty, not `.` or `..`, not hidden,
/// no separator or control character, at most 255 bytes.
pub fn confined_id(id: &str) -> Result<(), String> {
    let shown = crate::textio::quote(id);
    let mut parts = Path::new(id).components();
    let single = matches!(
        (parts.next(), parts.next()),
        (Some(Component::Normal(_)), None)
    );
    if !single
        || id.starts_with('.')
        || id.len() > 255
        || id.chars().any(|c| c.is_control() || c == '/' || c == '\\')
    {
        return Err(format!(
            "output id {shown} is not a plain folder name; rename the trial file"
        ));
    }
    Ok(())
}

/// The output folder of a trial, `<trials>/<id>`, after checking that it lies directly under
/// `trials` and, when it exists, is a real folder rather than a symbolic link.
pub fn trial_dir(trials: &Path, id: &str) -> Result<PathBuf, String> {
    confined_id(id)?;
    let dir = trials.join(id);
    if dir.parent() != Some(trials) {
        return Err(format!(
            "output folder {} is not directly under {}; rename the trial file",
            crate::textio::quote(&dir.display().to_string()),
            trials.display()
        ));
    }
    if let Ok(meta) = std::fs::symlink_metadata(&dir) {
        if meta.file_type().is_symlink() || !meta.is_dir() {
            return Err(format!(
                "{} is not a folder (a link or a file); remove it and run again",
                dir.display()
            ));
        }
    }
    Ok(dir)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn hostile_stems_become_plain_names() {
        for (stem, id) in [
            (".", "_"),
            ("..", "__"),
            ("...", "_._"),
            ("", "trial"),
            ("a/b", "a_b"),
            ("a\\b", "a_b"),
            ("line\nbreak\r", "line_break_"),
            ("<script>alert(1)</script>", "_script_alert_1___script_"),
            (".hidden", "_hidden"),
            ("con", "_con"),
            ("Nul.x", "_Nul.x"),
            ("walk 01", "walk_01"),
            ("marche-été", "marche-été"),
        ] {
            assert_eq!(sanitize_id(stem), id, "{stem:?}");
            assert!(confined_id(id).is_ok(), "{id:?}");
        }
        assert_eq!(sanitize_id(&"x".repeat(500)).chars().count(), MAX_ID_CHARS);
    }

    #[test]
    fn ids_that_leave_their_folder_are_refused() {
        for id in ["", ".", "..", "a/b", "../x", "/abs", ".hidden", "a\nb"] {
            assert!(confined_id(id).is_err(), "{id:?}");
        }
        let trials = Path::new("/out/trials");
        assert_eq!(trial_dir(trials, "walk").unwrap(), trials.join("walk"));
        assert!(trial_dir(trials, "..").is_err());
    }

    #[cfg(unix)]
    #[test]
    fn a_link_in_place_of_a_trial_folder_is_refused() {
        let dir = tempfile::tempdir().unwrap();
        let trials = dir.path().join("trials");
        std::fs::create_dir_all(&trials).unwrap();
        std::os::unix::fs::symlink(dir.path(), trials.join("walk")).unwrap();
        let e = trial_dir(&trials, "walk").unwrap_err();
        assert!(e.contains("not a folder"), "{e}");
    }
}
