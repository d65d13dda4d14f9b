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
    Ok(())
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
