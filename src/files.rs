//! The files a command reads and writes, and the one check that no output
//! destroys an input: every command lists its inputs (the scenario, the data
//! files it names, call records, part files) and its outputs (`--out`,
//! `--chart`, `--report`, `--scenario-out` and what it writes beside it)
//! in a [`FilePlan`] and calls [`FilePlan::check`] before any work starts.
//! Must not read file contents beyond the first bytes of an existing output.
//!
//! # Rules
//!
//! - An output that is the same file as an input is refused: the same
//!   device and inode where the file exists (so through symbolic and hard
//!   links), the same canonical path otherwise. No flag overrides this.
//! - Two outputs that are the same file are refused.
//! - An existing output file is replaced only when it looks like a busyhour
//!   output of the same kind ([`OutputKind::looks_like_ours`]) or is empty,
//!   or with `--force`; anything else (measured data, a scenario, a document
//!   of another program) is refused with a message naming the flag.

use std::io::Read;
use std::path::{Path, PathBuf};
use thiserror::Error;

/// What an output holds, for recognising an earlier output of the same kind.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum OutputKind {
    /// A JSON document of a command (it carries the caution text).
    Json,
    /// A CSV table of a run, a sweep, a staffing or call records.
    Csv,
    /// A text report.
    Text,
    /// An SVG chart.
    Svg,
    /// An HTML report.
    Html,
    /// A part file of a sharded run.
    Part,
    /// A scenario written by `records`.
    Scenario,
    /// A scenario written by `size --per-interval` (the staffing plan as
    /// the group's schedule).
    StaffedScenario,
    /// The holding-time column written beside such a scenario.
    HoldingCsv,
}

/// Text every report, JSON document and HTML page of busyhour carries.
const CAUTION_MARK: &str = "Estimates under the stated model assumptions";

/// What the first line of a scenario written by `size --per-interval`
/// carries.
pub const STAFFED_SCENARIO_MARK: &str = "(busyhour size --per-interval)";

impl OutputKind {
    /// Whether `head` (the first bytes of an existing file) looks like an
    /// output of this kind written by busyhour.
    pub fn looks_like_ours(self, head: &str) -> bool {
        let first = head
            .lines()
            .next()
            .unwrap_or("")
            .trim_start_matches('\u{feff}');
        match self {
            OutputKind::Json => head.trim_start().starts_with('{') && head.contains(CAUTION_MARK),
            OutputKind::Part => head.contains("\"busyhour-part\""),
            OutputKind::Csv => {
                // The caution comment line comes first (older files: the
                // header).
                let header = if first.starts_with("# Caution: ") {
                    head.lines().nth(1).unwrap_or("")
                } else {
                    first
                };
                header.starts_with("kind,name,interval_start_s,figure,")
                    || header.starts_with("value,kind,name,figure,")
                    || header.starts_with("start,date,time,calls,")
                    || header.starts_with("start_s,end_s,offered_traffic,stationary,")
            }
            OutputKind::Text => head.contains(CAUTION_MARK),
            OutputKind::Svg => {
                first.starts_with("<svg ") && first.contains("http://www.w3.org/2000/svg")
            }
            OutputKind::Html => first.starts_with("<!DOCTYPE html>") && head.contains(CAUTION_MARK),
            OutputKind::Scenario => first.starts_with("# ") && first.contains("(busyhour records)"),
            OutputKind::StaffedScenario => {
                first.starts_with("# ") && first.contains(STAFFED_SCENARIO_MARK)
            }
            OutputKind::HoldingCsv => first.trim_end() == "holding_s",
        }
    }

    fn words(self) -> &'static str {
        match self {
            OutputKind::Json => "a busyhour JSON document",
            OutputKind::Part => "a busyhour part file",
            OutputKind::Csv => "a busyhour CSV table",
            OutputKind::Text => "a busyhour report",
            OutputKind::Svg => "a busyhour chart",
            OutputKind::Html => "a busyhour HTML report",
            OutputKind::Scenario => "a scenario written by busyhour records",
            OutputKind::StaffedScenario => "a scenario written by busyhour size --per-interval",
            OutputKind::HoldingCsv => "a holding-time column written by busyhour records",
        }
    }
}

/// An output that would destroy an input or another output.
#[derive(Debug, Error, PartialEq)]
pub enum FileError {
    /// An output is an input.
    #[error("{flag} {path}: that is {role} this command reads; write the output to another file")]
    OutputIsInput {
        /// The output's flag, e.g. "--out".
        flag: String,
        /// The path as given.
        path: String,
        /// The input, in words ("the scenario", "the call-record file ...").
        role: String,
    },
    /// Two outputs are one file.
    #[error("{first} and {second} name the same file {path}: give each output its own file")]
    SameOutput {
        /// The first flag.
        first: String,
        /// The second flag.
        second: String,
        /// The path as given to the second.
        path: String,
    },
    /// An existing file would be replaced that is not an earlier output.
    #[error(
        "{flag} {path}: the file exists and does not look like {kind}; choose another name, or add --force to replace it"
    )]
    NotOurs {
        /// The flag.
        flag: String,
        /// The path as given.
        path: String,
        /// What an output of the flag looks like.
        kind: &'static str,
    },
    /// A chart or page named for another format: the file would hold SVG
    /// or HTML under a name that promises something else.
    #[error(
        "{flag} {path}: {what} are written as {expected}; name the file with a .{extension} ending"
    )]
    Extension {
        /// The flag.
        flag: String,
        /// The path as given.
        path: String,
        /// What the flag writes, plural: "charts".
        what: &'static str,
        /// The format: "SVG".
        expected: &'static str,
        /// The ending wanted: "svg".
        extension: &'static str,
    },
    /// The output path is a folder.
    #[error("{flag} {path}: that is a folder; name a file")]
    Folder {
        /// The flag.
        flag: String,
        /// The path as given.
        path: String,
    },
}

/// Identity of a file: device and inode where it exists, else the
/// canonical path (its folder canonicalised, then the name).
#[derive(Debug, Clone, PartialEq, Eq)]
enum Identity {
    Inode(u64, u64),
    Path(PathBuf),
}

#[cfg(unix)]
fn inode(meta: &std::fs::Metadata) -> Option<Identity> {
    use std::os::unix::fs::MetadataExt;
    Some(Identity::Inode(meta.dev(), meta.ino()))
}

/// Elsewhere an existing file is known by its canonical path.
#[cfg(not(unix))]
fn inode(_meta: &std::fs::Metadata) -> Option<Identity> {
    None
}

fn identity(path: &Path) -> Identity {
    if let Ok(meta) = std::fs::metadata(path) {
        if let Some(id) = inode(&meta) {
            return id;
        }
        if let Ok(c) = path.canonicalize() {
            return Identity::Path(c);
        }
    }
    let name = path.file_name().map(PathBuf::from).unwrap_or_default();
    let parent = match path.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    };
    match parent.canonicalize() {
        Ok(p) => Identity::Path(p.join(name)),
        Err(_) => Identity::Path(path.to_path_buf()),
    }
}

/// The files of one command.
#[derive(Debug, Default)]
pub struct FilePlan {
    inputs: Vec<(String, PathBuf)>,
    outputs: Vec<(String, PathBuf, OutputKind)>,
    force: bool,
}

impl FilePlan {
    /// An empty plan; `force` allows replacing existing files that do not
    /// look like busyhour outputs (never inputs).
    pub fn new(force: bool) -> Self {
        FilePlan {
            force,
            ..FilePlan::default()
        }
    }

    /// A file the command reads, described in words ("the scenario").
    pub fn input(&mut self, role: impl Into<String>, path: &Path) -> &mut Self {
        self.inputs.push((role.into(), path.to_path_buf()));
        self
    }

    /// A file the command writes, with its flag and kind.
    pub fn output(&mut self, flag: impl Into<String>, path: &Path, kind: OutputKind) -> &mut Self {
        self.outputs.push((flag.into(), path.to_path_buf(), kind));
        self
    }

    /// Refuse an output that is an input, two outputs that are one file,
    /// and an existing file that is not an earlier output (without force).
    pub fn check(&self) -> Result<(), FileError> {
        let shown = |p: &Path| crate::scenario::printable(&p.display().to_string());
        let inputs: Vec<(&String, Identity)> =
            self.inputs.iter().map(|(r, p)| (r, identity(p))).collect();
        let mut seen: Vec<(&String, Identity)> = Vec::new();
        for (flag, path, kind) in &self.outputs {
            let id = identity(path);
            if let Some((role, _)) = inputs.iter().find(|(_, i)| *i == id) {
                return Err(FileError::OutputIsInput {
                    flag: flag.clone(),
                    path: shown(path),
                    role: (*role).clone(),
                });
            }
            if let Some((first, _)) = seen.iter().find(|(_, i)| *i == id) {
                return Err(FileError::SameOutput {
                    first: (*first).clone(),
                    second: flag.clone(),
                    path: shown(path),
                });
            }
            seen.push((flag, id));
            if let Ok(meta) = std::fs::metadata(path) {
                if meta.is_dir() {
                    return Err(FileError::Folder {
                        flag: flag.clone(),
                        path: shown(path),
                    });
                }
                if !self.force && meta.len() > 0 && !kind.looks_like_ours(&head(path)) {
                    return Err(FileError::NotOurs {
                        flag: flag.clone(),
                        path: shown(path),
                        kind: kind.words(),
                    });
                }
            }
        }
        // Then the names: a chart or a page under a name for another format.
        for (flag, path, kind) in &self.outputs {
            let wanted = match kind {
                OutputKind::Svg => Some(("charts", "SVG", &["svg"][..])),
                OutputKind::Html => Some(("reports", "HTML", &["html", "htm"][..])),
                _ => None,
            };
            if let Some((what, expected, endings)) = wanted {
                let ending = path.extension().and_then(|e| e.to_str()).unwrap_or("");
                if !endings.iter().any(|e| ending.eq_ignore_ascii_case(e)) {
                    return Err(FileError::Extension {
                        flag: flag.clone(),
                        path: shown(path),
                        what,
                        expected,
                        extension: endings[0],
                    });
                }
            }
        }
        Ok(())
    }
}

/// The first 8 KiB of a file as text (lossy); empty when unreadable.
fn head(path: &Path) -> String {
    let mut buf = Vec::new();
    if let Ok(f) = std::fs::File::open(path) {
        let _ = f.take(8192).read_to_end(&mut buf);
    }
    String::from_utf8_lossy(&buf).into_owned()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn kinds_recognise_their_own_heads_only() {
        let json =
            "{\n  \"caution\": \"Estimates under the stated model assumptions, not guarantees.\"";
        assert!(OutputKind::Json.looks_like_ours(json));
        assert!(!OutputKind::Json.looks_like_ours("{\"a\": 1}"));
        assert!(OutputKind::Csv.looks_like_ours("kind,name,interval_start_s,figure,mean\n"));
        assert!(!OutputKind::Csv.looks_like_ours("start,duration,outcome\n"));
        assert!(OutputKind::HoldingCsv.looks_like_ours("holding_s\n12\n"));
        assert!(!OutputKind::Scenario.looks_like_ours("[simulation]\nlength = \"1h\"\n"));
        assert!(OutputKind::Csv.looks_like_ours(
            "# Caution: x\nstart_s,end_s,offered_traffic,stationary,modified_offered_traffic\n"
        ));
        let staffed = "# Clinic: agents staffed per interval (busyhour size --per-interval)\n";
        assert!(OutputKind::StaffedScenario.looks_like_ours(staffed));
        assert!(!OutputKind::Scenario.looks_like_ours(staffed));
        assert!(!OutputKind::StaffedScenario.looks_like_ours("# A clinic's line\n[simulation]\n"));
        assert!(OutputKind::Svg.looks_like_ours(
            "<svg width=\"1\" height=\"1\" xmlns=\"http://www.w3.org/2000/svg\">"
        ));
        assert!(!OutputKind::Svg.looks_like_ours("<?xml version=\"1.0\"?>\n<svg>"));
    }
}
