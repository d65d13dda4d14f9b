//! Writing output files whole: a temporary file beside the target, then a rename, so a
//! failed or interrupted run leaves any previous output as it was. Inputs are never written.

use std::io::Write;
use std::path::{Path, PathBuf};

/// Why an output could not be written.
#[derive(Debug, thiserror::Error)]
pub enum WriteError {
    #[error("refusing to write to '{0}': it is one of the input files; choose another output name")]
    IsInput(PathBuf),
    #[error("could not write '{path}': {source}")]
    Io {
        path: PathBuf,
        source: std::io::Error,
    },
}

fn same_file(a: &Path, b: &Path) -> bool {
    match (a.canonicalize(), b.canonicalize()) {
        (Ok(x), Ok(y)) => x == y,
        _ => false,
    }
}

/// Writes `bytes` to `path` atomically. `path` of `-` writes to standard output.
pub fn write_output(path: &Path, bytes: &[u8], inputs: &[&Path]) -> Result<(), WriteError> {
    if path.as_os_str() == "-" {
        let mut out = std::io::stdout().lock();
        return out
            .write_all(bytes)
            .and_then(|_| out.flush())
            .map_err(|source| WriteError::Io {
                path: path.to_path_buf(),
                source,
            });
    }
    if inputs.iter().any(|i| same_file(i, path)) {
        return Err(WriteError::IsInput(path.to_path_buf()));
    }
    let io = |source| WriteError::Io {
        path: path.to_path_buf(),
        source,
    };
    let dir = match path.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    };
    let mut tmp = tempfile_in(&dir, path).map_err(io)?;
    let result = (|| {
        tmp.1.write_all(bytes)?;
        tmp.1.sync_all()?;
        std::fs::rename(&tmp.0, path)
    })();
    if let Err(e) = result {
        let _ = std::fs::remove_file(&tmp.0);
        return Err(io(e));
    }
    remove_stale_temps(&dir, path, &tmp.0);
    Ok(())
}

/// The process id in a temp file name `.{target}.{pid}.{n}.tmp` made for `target`, if it is one.
fn temp_owner(name: &str, target: &str) -> Option<u32> {
    let rest = name
        .strip_prefix('.')?
        .strip_prefix(target)?
        .strip_prefix('.')?;
    let rest = rest.strip_suffix(".tmp")?;
    let (pid, n) = rest.split_once('.')?;
    n.parse::<u32>().ok()?;
    pid.parse().ok()
}

/// True when process `pid` is known to have ended (Linux `/proc`; elsewhere never known).
fn process_gone(pid: u32) -> bool {
    let proc_dir = Path::new("/proc");
    proc_dir.join("self").exists() && !proc_dir.join(pid.to_string()).exists()
}

/// Removes temp files of the same target left by killed runs: another process id that is no
/// longer running, and older than this write's own temp file. Best effort: errors are ignored.
fn remove_stale_temps(dir: &Path, target: &Path, own_tmp: &Path) {
    let Some(target_name) = target.file_name().map(|s| s.to_string_lossy().into_owned()) else {
        return;
    };
    // the own temp file was renamed to the target: its time is this write's time
    let Ok(now) = std::fs::metadata(target).and_then(|m| m.modified()) else {
        return;
    };
    let Ok(entries) = std::fs::read_dir(dir) else {
        return;
    };
    for e in entries.flatten() {
        let name = e.file_name().to_string_lossy().into_owned();
        let Some(pid) = temp_owner(&name, &target_name) else {
            continue;
        };
        let p = e.path();
        if pid == std::process::id() || p == own_tmp || !process_gone(pid) {
            continue;
        }
        let older = e
            .metadata()
            .and_then(|m| m.modified())
            .is_ok_and(|t| t < now);
        if older && e.file_type().is_ok_and(|t| t.is_file()) {
            let _ = std::fs::remove_file(&p);
        }
    }
}

/// Creates a new hidden temporary file beside the target.
fn tempfile_in(dir: &Path, target: &Path) -> std::io::Result<(PathBuf, std::fs::File)> {
    let stem = target
        .file_name()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_else(|| "out".into());
    for n in 0..1000u32 {
        let p = dir.join(format!(".{stem}.{}.{n}.tmp", std::process::id()));
        match std::fs::OpenOptions::new()
            .write(true)
            .create_new(true)
            .open(&p)
        {
            Ok(f) => return Ok((p, f)),
            Err(e) if e.kind() == std::io::ErrorKind::AlreadyExists => continue,
            Err(e) => return Err(e),
        }
    }
    Err(std::io::Error::other("could not create a temporary file"))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn temp_names_are_recognised_only_for_their_target() {
        assert_eq!(temp_owner(".out.json.4242.0.tmp", "out.json"), Some(4242));
        assert_eq!(temp_owner(".out.json.4242.17.tmp", "out.json"), Some(4242));
        assert_eq!(temp_owner(".out.json.4242.0.tmp", "out.jso"), None);
        assert_eq!(temp_owner(".out.json.x.0.tmp", "out.json"), None);
        assert_eq!(temp_owner("out.json", "out.json"), None);
        assert_eq!(temp_owner(".out.json.4242.0.tmpx", "out.json"), None);
    }

    #[test]
    fn a_running_process_is_not_gone() {
        assert!(!process_gone(std::process::id()));
    }
}
