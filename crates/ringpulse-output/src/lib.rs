//! Output of ringpulse results: CSV tables, the JSON summary, plots and the terminal report.
//!
//! This is the only library crate that writes files. [`write_run`] and the study writers go
//! through [`write_atomically`], which is all-or-nothing: the files are written into a sibling
//! temporary directory and moved into place only when every one of them has been written and
//! every destination can take them; a failure while moving puts back what was there before,
//! so no half-written output is left.

use std::fs;
use std::path::{Path, PathBuf};

use ringpulse_engine::RunResult;
use sha2::{Digest, Sha256};

pub mod motion_out;
pub mod plots;
pub mod report;
pub mod study;
pub mod tables;

pub use report::{eng, format_report};

/// The usual cautions for high-voltage capacitor banks, shown by the CLI and in reports.
pub const SAFETY_NOTICE: &str = "\
CAUTION: charged capacitor banks at kilovolts and kilojoules are lethal.
- Stored energy persists after the charger is off, and dielectric absorption recharges a
  capacitor that was shorted briefly: dump and ground the bank (bleeder resistors, automatic
  dump switches, grounding sticks) and verify zero voltage before any contact.
- Use interlocked enclosures, remote firing and a clear-area procedure; contain the coil and
  the workpiece, since a failing coil or an ejected part flies at high velocity.
- Discharges are loud (impulse noise) and the pulsed field endangers implanted medical devices
  and induces voltages in nearby loops.
ringpulse is a design aid, not a safety assessment: follow local codes, the equipment maker's
instructions and licensed practice.";

/// One-line form of the caution, for file headers and summaries.
pub const SAFETY_LINE: &str =
    "high-voltage capacitor banks are lethal; ringpulse is a design aid, not a \
safety assessment: follow local codes, the equipment maker's instructions and licensed practice";

/// SHA-256 of the case file bytes, as lowercase hex.
pub fn case_hash(case_bytes: &[u8]) -> String {
    let digest = Sha256::digest(case_bytes);
    digest.iter().map(|b| format!("{b:02x}")).collect()
}

/// Where a result came from: recorded in summary.json so that results can be traced.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct RunMeta {
    /// ringpulse version that produced the result.
    pub version: String,
    /// Path of the case file as given.
    pub case_path: String,
    /// SHA-256 of the case file bytes.
    pub case_sha256: String,
    /// The case's description.
    pub description: String,
}

/// What to write.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct WriteOptions {
    /// Draw the plots (PNG and SVG). Default: true.
    pub plots: bool,
}

impl Default for WriteOptions {
    fn default() -> Self {
        WriteOptions { plots: true }
    }
}

/// Errors while writing output.
#[derive(Debug, thiserror::Error)]
pub enum OutputError {
    /// A file or directory could not be written.
    ///
    /// The message already holds the operating system's text, so `cause` is not also
    /// reported as the error's source (an error chain would print it twice).
    #[error("cannot write \"{path}\": {cause}")]
    Io {
        /// The path concerned.
        path: PathBuf,
        /// The underlying error.
        cause: std::io::Error,
    },
    /// A file of the output cannot take the place of what is at its destination; nothing was
    /// moved into the output directory.
    #[error("cannot write \"{path}\": {message}")]
    Destination {
        /// The destination path.
        path: PathBuf,
        /// What is in the way and what was expected.
        message: String,
    },
    /// A plot could not be drawn.
    #[error("cannot draw plot \"{path}\": {message}")]
    Plot {
        /// The plot file.
        path: PathBuf,
        /// What the plotting library said.
        message: String,
    },
    /// A value could not be serialised.
    #[error("cannot encode \"{path}\": {message}")]
    Encode {
        /// The file concerned.
        path: PathBuf,
        /// What went wrong.
        message: String,
    },
}

pub(crate) fn io_err(path: &Path) -> impl FnOnce(std::io::Error) -> OutputError + '_ {
    move |cause| OutputError::Io { path: path.to_path_buf(), cause }
}

/// Writes timeseries.csv, rings.csv, summary.json and the plots of a run into `out_dir`;
/// with motion, rings.csv gains velocity, strain and temperature columns and profile.csv and
/// the motion and profile plots are added.
///
/// All files are first written into `<out_dir>.partial-<pid>` beside it and moved into
/// `out_dir` (created if needed; files of the same names are replaced, others left alone)
/// only when all of them are complete. On error the temporary directory is removed.
/// Returns the paths written, inside `out_dir`.
pub fn write_run(
    out_dir: &Path,
    meta: &RunMeta,
    result: &RunResult,
    opts: &WriteOptions,
) -> Result<Vec<PathBuf>, OutputError> {
    write_atomically(out_dir, |tmp| {
        let mut files = vec![
            tables::write_timeseries(&tmp.join("timeseries.csv"), result)?,
            tables::write_summary(&tmp.join("summary.json"), meta, result)?,
        ];
        if !result.rings.z.is_empty() {
            files.push(tables::write_rings(&tmp.join("rings.csv"), result)?);
        }
        let motion = result.summary.motion.as_ref().filter(|_| motion_out::has_motion(result));
        if let Some(m) = motion {
            files.push(motion_out::write_profile(
                &tmp.join("profile.csv"),
                result,
                m.initial_wall,
                m.stop_radius,
            )?);
        }
        if opts.plots {
            files.extend(plots::draw_all(tmp, result)?);
            if let Some(m) = motion {
                files.extend(motion_out::draw_motion(tmp, result, m.initial_wall, m.stop_radius)?);
            }
        }
        Ok(files)
    })
}

/// Runs `write` against a fresh temporary directory beside `out_dir`, then moves what it wrote
/// into `out_dir`, all or nothing. The closure returns the files it wrote (paths directly
/// inside the temporary directory); the result lists them inside `out_dir`.
///
/// - When `out_dir` does not exist, the temporary directory is renamed to `out_dir` in one
///   step.
/// - When it exists, every destination is checked first: `out_dir` must be a directory and no
///   destination may be a directory; otherwise the call fails before anything is moved. Files
///   of the same names are replaced, other files are left alone. If a move fails midway, the
///   files already moved are removed and the files they replaced are put back.
///
/// The temporary directory (`<out_dir>.partial-<pid>`) is removed in every case.
pub fn write_atomically(
    out_dir: &Path,
    write: impl FnOnce(&Path) -> Result<Vec<PathBuf>, OutputError>,
) -> Result<Vec<PathBuf>, OutputError> {
    let name =
        out_dir.file_name().map_or_else(|| "out".into(), |n| n.to_string_lossy().into_owned());
    let parent = match out_dir.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    };
    let tmp = parent.join(format!("{name}.partial-{}", std::process::id()));
    if tmp.exists() {
        fs::remove_dir_all(&tmp).map_err(io_err(&tmp))?;
    }
    fs::create_dir_all(&tmp).map_err(io_err(&tmp))?;
    let outcome = write(&tmp).and_then(|files| install(&tmp, out_dir, &files));
    if tmp.exists() {
        let _ = fs::remove_dir_all(&tmp);
    }
    outcome
}

/// Moves `files` (inside `tmp`) into `out_dir`; see [`write_atomically`].
fn install(tmp: &Path, out_dir: &Path, files: &[PathBuf]) -> Result<Vec<PathBuf>, OutputError> {
    let mut names = Vec::with_capacity(files.len());
    for f in files {
        match f.file_name() {
            Some(n) if f.parent() == Some(tmp) => names.push(n.to_os_string()),
            _ => {
                return Err(OutputError::Destination {
                    path: f.clone(),
                    message: format!(
                        "not a file directly inside the temporary directory \"{}\"",
                        tmp.display()
                    ),
                })
            }
        }
    }
    let dests: Vec<PathBuf> = names.iter().map(|n| out_dir.join(n)).collect();
    match fs::symlink_metadata(out_dir) {
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => {
            // Nothing there yet: the whole directory goes into place in one rename.
            fs::rename(tmp, out_dir).map_err(io_err(out_dir))?;
            return Ok(dests);
        }
        Err(e) => return Err(OutputError::Io { path: out_dir.to_path_buf(), cause: e }),
        Ok(_) => {}
    }
    // A symbolic link to a directory is a fine output directory, so follow links here.
    if !fs::metadata(out_dir).map_err(io_err(out_dir))?.is_dir() {
        return Err(OutputError::Destination {
            path: out_dir.to_path_buf(),
            message: "it exists and is not a directory; expected a directory (or a path that \
                      does not exist yet)"
                .into(),
        });
    }
    // Check every destination before anything moves.
    let mut replaced = Vec::with_capacity(dests.len());
    for dest in &dests {
        match fs::symlink_metadata(dest) {
            Err(e) if e.kind() == std::io::ErrorKind::NotFound => replaced.push(false),
            Err(e) => return Err(OutputError::Io { path: dest.clone(), cause: e }),
            Ok(m) if m.is_dir() => {
                return Err(OutputError::Destination {
                    path: dest.clone(),
                    message: format!(
                        "a directory of that name is in the way; expected a file or nothing \
                         there (nothing was written to \"{}\")",
                        out_dir.display()
                    ),
                })
            }
            Ok(_) => replaced.push(true),
        }
    }
    // Move the files in, keeping each replaced file in the temporary directory until all
    // are in place, so that a failure can put everything back.
    let backup_dir = tmp.join(".replaced");
    let mut done: Vec<(PathBuf, Option<PathBuf>)> = Vec::with_capacity(dests.len());
    for ((name, dest), &had_file) in names.iter().zip(&dests).zip(&replaced) {
        let step = || -> Result<Option<PathBuf>, OutputError> {
            let backup = if had_file {
                fs::create_dir_all(&backup_dir).map_err(io_err(&backup_dir))?;
                let b = backup_dir.join(name);
                fs::rename(dest, &b).map_err(io_err(dest))?;
                Some(b)
            } else {
                None
            };
            if let Err(cause) = fs::rename(tmp.join(name), dest) {
                if let Some(b) = &backup {
                    let _ = fs::rename(b, dest);
                }
                return Err(OutputError::Io { path: dest.clone(), cause });
            }
            Ok(backup)
        };
        match step() {
            Ok(backup) => done.push((dest.clone(), backup)),
            Err(e) => {
                roll_back(&done);
                return Err(e);
            }
        }
    }
    Ok(dests)
}

/// Undoes the moves of [`install`], newest first: removes each file moved in and puts back
/// the file it replaced.
fn roll_back(done: &[(PathBuf, Option<PathBuf>)]) {
    for (dest, backup) in done.iter().rev() {
        let _ = fs::remove_file(dest);
        if let Some(b) = backup {
            let _ = fs::rename(b, dest);
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn hash_is_sha256_hex() {
        // SHA-256 of "abc" (FIPS 180-2, appendix B.1).
        assert_eq!(
            case_hash(b"abc"),
            "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"
        );
    }
}
