//! Writing output files whole: a temporary file beside the target, then a rename, so a
//! failed or interrupted run leaves any previous output as it was. Inputs are never written.
//!
//! What the output path names decides how it is written:
//! - `-`: standard output;
//! - a link: followed to the file it names, which is replaced (the link stays);
//! - a character device (a terminal, `/dev/null`) or a named pipe: written straight through,
//!   never replaced by a regular file;
//! - a folder, a block device or a socket: refused;
//! - anything else: a new or regular file, written whole through a temporary file.
//!
//! The temporary file has a short name (`.tapplan-<hash of the target's name>.<pid>.<n>.tmp`),
//! so any legal output name works, and it is removed if SIGINT or SIGTERM arrives during the
//! write (the signal then ends the process as it would have).

use std::io::Write;
use std::path::{Path, PathBuf};

/// Why an output could not be written.
#[derive(Debug, thiserror::Error)]
pub enum WriteError {
    #[error("refusing to write to '{}': it is one of the input files; choose another output name", shown(.0))]
    IsInput(PathBuf),
    #[error("refusing to write to '{}': it is {kind}; give the path of a file", shown(.path))]
    NotWritable { path: PathBuf, kind: &'static str },
    #[error("could not write to standard output: {}", crate::input::plain_io(.0))]
    Stdout(std::io::Error),
    #[error("could not write '{}': {}", shown(.path), crate::input::plain_io(.error))]
    Io {
        path: PathBuf,
        error: std::io::Error,
    },
}

impl WriteError {
    /// The underlying I/O error, if any.
    pub fn io_kind(&self) -> Option<std::io::ErrorKind> {
        match self {
            WriteError::Stdout(e) | WriteError::Io { error: e, .. } => Some(e.kind()),
            _ => None,
        }
    }
}

fn shown(p: &Path) -> String {
    crate::text::escape_controls(&p.display().to_string()).into_owned()
}

fn same_file(a: &Path, b: &Path) -> bool {
    match (a.canonicalize(), b.canonicalize()) {
        (Ok(x), Ok(y)) => x == y,
        _ => false,
    }
}

/// The path a chain of links ends at (the path itself when it is not a link). A link to a
/// file not yet there ends at that file's path. At most 40 links are followed (the Linux
/// limit, `MAXSYMLINKS`).
fn follow_links(path: &Path) -> std::io::Result<PathBuf> {
    let mut p = path.to_path_buf();
    for _ in 0..40 {
        match std::fs::symlink_metadata(&p) {
            Ok(m) if m.file_type().is_symlink() => {
                let to = std::fs::read_link(&p)?;
                p = match p.parent() {
                    Some(dir) if to.is_relative() => dir.join(to),
                    _ => to,
                };
            }
            _ => return Ok(p),
        }
    }
    Err(std::io::Error::other("too many levels of links"))
}

/// How a path that exists but is not a regular file is written: straight through (devices
/// and pipes) or refused (what it is).
enum Special {
    Through,
    Refuse(&'static str),
}

fn special(meta: &std::fs::Metadata) -> Option<Special> {
    let t = meta.file_type();
    if t.is_file() {
        return None;
    }
    if t.is_dir() {
        return Some(Special::Refuse("a folder"));
    }
    #[cfg(unix)]
    {
        use std::os::unix::fs::FileTypeExt;
        if t.is_char_device() || t.is_fifo() {
            return Some(Special::Through);
        }
    }
    Some(Special::Refuse(crate::input::kind_of(meta)))
}

/// True for `-` and the names of standard output itself (`/dev/stdout`, `/dev/fd/1`,
/// `/proc/self/fd/1`): they are written to this process's standard output.
pub fn is_stdout(path: &Path) -> bool {
    matches!(
        path.to_str(),
        Some("-" | "/dev/stdout" | "/dev/fd/1" | "/proc/self/fd/1")
    )
}

/// Writes `bytes` to `path` whole (see the module notes). `path` of `-` (or a name of
/// standard output, see [`is_stdout`]) writes to standard output.
pub fn write_output(path: &Path, bytes: &[u8], inputs: &[&Path]) -> Result<(), WriteError> {
    if is_stdout(path) {
        let mut out = std::io::stdout().lock();
        return out
            .write_all(bytes)
            .and_then(|_| out.flush())
            .map_err(WriteError::Stdout);
    }
    if inputs.iter().any(|i| same_file(i, path)) {
        return Err(WriteError::IsInput(path.to_path_buf()));
    }
    let io = |error| WriteError::Io {
        path: path.to_path_buf(),
        error,
    };
    // what the path leads to, as the kernel follows it (this also resolves /dev/stderr and
    // /proc/self/fd/N, whose links do not name a path)
    if let Ok(meta) = std::fs::metadata(path) {
        match special(&meta) {
            Some(Special::Through) => {
                let mut f = std::fs::OpenOptions::new()
                    .write(true)
                    .open(path)
                    .map_err(io)?;
                return f.write_all(bytes).and_then(|_| f.flush()).map_err(io);
            }
            Some(Special::Refuse(kind)) => {
                return Err(WriteError::NotWritable {
                    path: path.to_path_buf(),
                    kind,
                });
            }
            None => {}
        }
    }
    let target = follow_links(path).map_err(io)?;
    let dir = match target.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    };
    let mut tmp = tempfile_in(&dir, &target).map_err(io)?;
    let result = (|| {
        tmp.1.write_all(bytes)?;
        tmp.1.sync_all()?;
        hold_for_tests();
        std::fs::rename(&tmp.0, &target)
    })();
    cleanup::forget(&tmp.0);
    if let Err(e) = result {
        let _ = std::fs::remove_file(&tmp.0);
        return Err(io(e));
    }
    remove_stale_temps(&dir, &target, &tmp.0);
    Ok(())
}

/// Debug builds only: waits `TAPPLAN_TEST_HOLD_TEMP_MS` milliseconds with the temporary file
/// written and not yet renamed, so tests can interrupt a write at that moment.
fn hold_for_tests() {
    #[cfg(debug_assertions)]
    if let Some(ms) = std::env::var("TAPPLAN_TEST_HOLD_TEMP_MS")
        .ok()
        .and_then(|v| v.parse::<u64>().ok())
    {
        std::thread::sleep(std::time::Duration::from_millis(ms.min(60_000)));
    }
}

/// FNV-1a, 64 bits (Fowler, Noll, Vo): a short, stable tag of the target's name for its
/// temporary files.
fn name_hash(name: &[u8]) -> u64 {
    let mut h: u64 = 0xcbf2_9ce4_8422_2325;
    for b in name {
        h ^= u64::from(*b);
        h = h.wrapping_mul(0x0100_0000_01b3);
    }
    h
}

fn target_tag(target: &Path) -> String {
    let name = target
        .file_name()
        .map(|s| s.as_encoded_bytes().to_vec())
        .unwrap_or_default();
    format!("{:016x}", name_hash(&name))
}

/// The process id in a temp file name `.tapplan-{tag}.{pid}.{n}.tmp` made for the target
/// whose tag is `tag`, if it is one; or in the longer `.{target}.{pid}.{n}.tmp` of earlier
/// versions (`target` is the target's file name).
fn temp_owner(name: &str, tag: &str, target: &str) -> Option<u32> {
    let rest = match name
        .strip_prefix(".tapplan-")
        .and_then(|r| r.strip_prefix(tag))
    {
        Some(r) => r,
        None => name.strip_prefix('.')?.strip_prefix(target)?,
    }
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
    let tag = target_tag(target);
    let target_name = target
        .file_name()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_default();
    // the own temp file was renamed to the target: its time is this write's time
    let Ok(now) = std::fs::metadata(target).and_then(|m| m.modified()) else {
        return;
    };
    let Ok(entries) = std::fs::read_dir(dir) else {
        return;
    };
    for e in entries.flatten() {
        let name = e.file_name().to_string_lossy().into_owned();
        let Some(pid) = temp_owner(&name, &tag, &target_name) else {
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

/// Creates a new hidden temporary file beside the target, registered for removal on SIGINT
/// and SIGTERM.
fn tempfile_in(dir: &Path, target: &Path) -> std::io::Result<(PathBuf, std::fs::File)> {
    let tag = target_tag(target);
    cleanup::install();
    for n in 0..1000u32 {
        let p = dir.join(format!(".tapplan-{tag}.{}.{n}.tmp", std::process::id()));
        // registered before it exists, so a signal between the two still removes it
        cleanup::remember(&p);
        match std::fs::OpenOptions::new()
            .write(true)
            .create_new(true)
            .open(&p)
        {
            Ok(f) => return Ok((p, f)),
            Err(e) => {
                cleanup::forget(&p);
                if e.kind() == std::io::ErrorKind::AlreadyExists {
                    continue;
                }
                return Err(e);
            }
        }
    }
    Err(std::io::Error::other("could not create a temporary file"))
}

/// Temporary files being written, removed when SIGINT or SIGTERM arrives.
mod cleanup {
    use std::path::{Path, PathBuf};
    use std::sync::Mutex;

    static ACTIVE: Mutex<Vec<PathBuf>> = Mutex::new(Vec::new());

    pub fn remember(p: &Path) {
        if let Ok(mut v) = ACTIVE.lock() {
            v.push(p.to_path_buf());
        }
    }

    pub fn forget(p: &Path) {
        if let Ok(mut v) = ACTIVE.lock() {
            v.retain(|x| x != p);
        }
    }

    /// Starts (once) a thread that waits for SIGINT or SIGTERM, removes the temporary files
    /// being written, and then ends the process as the signal's default action would.
    #[cfg(unix)]
    pub fn install() {
        use signal_hook::consts::{SIGINT, SIGTERM};
        static ONCE: std::sync::Once = std::sync::Once::new();
        ONCE.call_once(|| {
            let Ok(mut signals) = signal_hook::iterator::Signals::new([SIGINT, SIGTERM]) else {
                return;
            };
            std::thread::spawn(move || {
                if let Some(sig) = signals.forever().next() {
                    if let Ok(v) = ACTIVE.lock() {
                        for p in v.iter() {
                            let _ = std::fs::remove_file(p);
                        }
                    }
                    let _ = signal_hook::low_level::emulate_default_handler(sig);
                    std::process::exit(128 + sig);
                }
            });
        });
    }

    #[cfg(not(unix))]
    pub fn install() {}
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn temp_names_are_recognised_only_for_their_target() {
        let tag = target_tag(Path::new("out.json"));
        let other = target_tag(Path::new("out.jso"));
        assert_ne!(tag, other);
        let t = "out.json";
        let o = "out.jso";
        assert_eq!(
            temp_owner(&format!(".tapplan-{tag}.4242.0.tmp"), &tag, t),
            Some(4242)
        );
        assert_eq!(
            temp_owner(&format!(".tapplan-{tag}.4242.17.tmp"), &tag, t),
            Some(4242)
        );
        assert_eq!(
            temp_owner(&format!(".tapplan-{tag}.4242.0.tmp"), &other, o),
            None
        );
        assert_eq!(
            temp_owner(&format!(".tapplan-{tag}.x.0.tmp"), &tag, t),
            None
        );
        assert_eq!(temp_owner("out.json", &tag, t), None);
        assert_eq!(
            temp_owner(&format!(".tapplan-{tag}.4242.0.tmpx"), &tag, t),
            None
        );
        // the earlier, longer form
        assert_eq!(temp_owner(".out.json.4242.0.tmp", &tag, t), Some(4242));
        assert_eq!(temp_owner(".out.json.4242.0.tmp", &other, o), None);
    }

    /// FNV-1a 64 check values: "" → cbf29ce484222325, "a" → af63dc4c8601ec8c (from the
    /// authors' published test vectors — from memory).
    #[test]
    fn name_hash_is_fnv1a_64() {
        assert_eq!(name_hash(b""), 0xcbf2_9ce4_8422_2325);
        assert_eq!(name_hash(b"a"), 0xaf63_dc4c_8601_ec8c);
    }

    #[test]
    fn a_running_process_is_not_gone() {
        assert!(!process_gone(std::process::id()));
    }
}
