//! Checks, made before any work, that a results file can be written: the
//! folder exists and takes a new file, the target is not a folder, and the
//! disk has room for what the run will write. Each failure is a
//! [`GlazeError::Results`] (exit code 4) saying what to change.

use crate::error::GlazeError;
use crate::model::Model;
use crate::spec::DynamicsSpec;
use std::path::Path;

/// Bytes a results file needs besides its histories, in B: HDF5 metadata,
/// attributes and the model and static tables of a small section (a row
/// of spans writes about 100 kB; common practice margin).
pub const BASE_BYTES: u64 = 256 * 1024;

/// Bytes of `/dynamic` per record and node, uncompressed: displacement
/// (3), rotation (4) and velocity (3) as f64.
const BYTES_PER_NODE: u64 = 8 * 10;

fn fail(target: &Path, message: String) -> GlazeError {
    GlazeError::Results { path: target.to_path_buf(), message }
}

/// Checks that `target` can be written and that its disk has `needed`
/// bytes free (when the free space can be known).
pub fn check(target: &Path, needed: u64) -> Result<(), GlazeError> {
    let shown = target.display();
    if target.file_name().is_none()
        || target.as_os_str().to_string_lossy().ends_with(std::path::MAIN_SEPARATOR)
    {
        return Err(fail(
            target,
            format!("`{shown}` names a folder; give a file name, e.g. `{shown}/result.h5`"),
        ));
    }
    let folder = match target.parent() {
        Some(p) if !p.as_os_str().is_empty() => p,
        _ => Path::new("."),
    };
    match std::fs::metadata(folder) {
        Ok(m) if m.is_dir() => {}
        Ok(_) => return Err(fail(target, format!("`{}` is not a folder", folder.display()))),
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => {
            return Err(fail(
                target,
                format!("the folder `{}` does not exist; create it first (mkdir -p)", folder.display()),
            ))
        }
        Err(e) => return Err(fail(target, format!("cannot reach the folder `{}`: {e}", folder.display()))),
    }
    if std::fs::metadata(target).is_ok_and(|m| m.is_dir()) {
        let example = target.join("result.h5");
        return Err(fail(
            target,
            format!("`{shown}` is a folder; give a file name, e.g. `{}`", example.display()),
        ));
    }
    probe(target, folder)?;
    if let Some(free) = free_space(folder) {
        if needed > free {
            return Err(fail(
                target,
                format!(
                    "the run needs up to {} (uncompressed estimate) but only {} are free on the disk of `{}`; \
                     free some space, write elsewhere, or lengthen the output interval",
                    human(needed),
                    human(free),
                    folder.display()
                ),
            ));
        }
    }
    Ok(())
}

/// Creates, writes and removes a probe file in `folder`.
fn probe(target: &Path, folder: &Path) -> Result<(), GlazeError> {
    use std::io::Write;
    let name = format!(".glaze-write-probe-{}", std::process::id());
    let path = folder.join(name);
    let written = std::fs::OpenOptions::new()
        .write(true)
        .create_new(true)
        .open(&path)
        .and_then(|mut f| f.write_all(b"glaze").and_then(|_| f.sync_all()));
    let _ = std::fs::remove_file(&path);
    written.map_err(|e| fail(target, format!("cannot write in the folder `{}`: {e}", folder.display())))
}

/// Free bytes for an unprivileged writer on the disk holding `folder`;
/// `None` where that is not known.
pub fn free_space(folder: &Path) -> Option<u64> {
    #[cfg(unix)]
    {
        rustix::fs::statvfs(folder).ok().map(|s| s.f_bavail.saturating_mul(s.f_frsize))
    }
    #[cfg(not(unix))]
    {
        let _ = folder;
        None
    }
}

/// Upper estimate of the bytes of a run's results file, uncompressed: the
/// base, then per record the time, the energy terms and, per node,
/// element and support, its histories (layout in `docs/results-format.md`).
pub fn run_bytes(model: &Model, dynamics: &DynamicsSpec) -> u64 {
    let records = (dynamics.duration / dynamics.output_interval).ceil().min(u64::MAX as f64) as u64 + 1;
    let per_record = 8 * (1 + 5)
        + BYTES_PER_NODE * model.node_count() as u64
        + 8 * model.elements.len() as u64
        + 8 * 3 * model.support_nodes.len() as u64;
    BASE_BYTES.saturating_add(records.saturating_mul(per_record))
}

/// A write error of the HDF5 library on one line, a full disk said plainly.
pub fn describe_write_error(e: impl std::fmt::Display) -> String {
    let text = e.to_string();
    let line = text.split_whitespace().collect::<Vec<_>>().join(" ");
    if line.contains("errno = 28") || line.contains("No space left on device") {
        format!("the disk is full (No space left on device) [{line}]")
    } else {
        line
    }
}

/// `bytes` in kB, MB or GB (powers of 1000).
fn human(bytes: u64) -> String {
    let b = bytes as f64;
    match b {
        b if b >= 1e9 => format!("{:.1} GB", b / 1e9),
        b if b >= 1e6 => format!("{:.1} MB", b / 1e6),
        b => format!("{:.0} kB", b / 1e3),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn human_sizes() {
        assert_eq!(human(2_500_000_000), "2.5 GB");
        assert_eq!(human(3_200_000), "3.2 MB");
        assert_eq!(human(12_000), "12 kB");
    }

    #[test]
    fn missing_folder_and_folder_target() {
        let dir = std::env::temp_dir().join(format!("glaze-preflight-{}", std::process::id()));
        std::fs::create_dir_all(&dir).unwrap();
        let e = check(&dir.join("no/such/r.h5"), 0).unwrap_err().to_string();
        assert!(e.contains("does not exist"), "{e}");
        let e = check(&dir, 0).unwrap_err().to_string();
        assert!(e.contains("is a folder"), "{e}");
        check(&dir.join("r.h5"), 0).unwrap();
        let e = check(&dir.join("r.h5"), u64::MAX).unwrap_err().to_string();
        assert!(e.contains("are free"), "{e}");
        std::fs::remove_dir_all(&dir).unwrap();
    }
}
