//! Reading input files with a bound: only regular files are read (a folder, a named pipe, a
//! device or a socket is refused and named), and never more than the limit plus one byte,
//! however the file's size is reported (`/dev/zero` reports 0 bytes and never ends).

use std::io::Read;
use std::path::Path;

/// Why an input file was not read.
#[derive(Debug, thiserror::Error)]
pub enum ReadError {
    /// The path names something other than a regular file (after following links).
    #[error("this is {0}, not a regular file")]
    NotAFile(&'static str),
    /// The file holds more than the limit.
    #[error("the file is larger than {limit} bytes")]
    TooLarge { limit: u64 },
    #[error("cannot read the file: {}", plain_io(.0))]
    Io(#[from] std::io::Error),
}

/// An I/O error's text without the "(os error N)" suffix.
pub fn plain_io(e: &std::io::Error) -> String {
    let s = e.to_string();
    match s.rfind(" (os error ") {
        Some(i) if s.ends_with(')') => s[..i].to_string(),
        _ => s,
    }
}

/// What kind of thing a path that is not a regular file names, in words.
pub fn kind_of(meta: &std::fs::Metadata) -> &'static str {
    let t = meta.file_type();
    if t.is_dir() {
        return "a folder";
    }
    #[cfg(unix)]
    {
        use std::os::unix::fs::FileTypeExt;
        if t.is_fifo() {
            return "a named pipe (FIFO)";
        }
        if t.is_char_device() {
            return "a character device (such as /dev/zero or a terminal)";
        }
        if t.is_block_device() {
            return "a block device (a disk)";
        }
        if t.is_socket() {
            return "a socket";
        }
    }
    "not a regular file"
}

/// Opens `path` for reading without blocking on a named pipe (POSIX `O_NONBLOCK`).
fn open_nonblocking(path: &Path) -> std::io::Result<std::fs::File> {
    let mut o = std::fs::OpenOptions::new();
    o.read(true);
    #[cfg(unix)]
    {
        use std::os::unix::fs::OpenOptionsExt;
        o.custom_flags(libc::O_NONBLOCK);
    }
    o.open(path)
}

/// Reads a regular file of at most `limit` bytes. Links are followed; what they lead to must
/// be a regular file. At most `limit + 1` bytes are read, so a file that grows or reports a
/// wrong size cannot make the read unbounded.
pub fn read_limited(path: &Path, limit: u64) -> Result<Vec<u8>, ReadError> {
    // stat first: opening a named pipe for reading would wait for a writer
    let meta = std::fs::metadata(path)?;
    if !meta.is_file() {
        return Err(ReadError::NotAFile(kind_of(&meta)));
    }
    let f = open_nonblocking(path)?;
    // the thing opened may have been swapped since the stat
    let meta = f.metadata()?;
    if !meta.is_file() {
        return Err(ReadError::NotAFile(kind_of(&meta)));
    }
    if meta.len() > limit {
        return Err(ReadError::TooLarge { limit });
    }
    let mut bytes = Vec::with_capacity(meta.len().min(limit) as usize);
    f.take(limit.saturating_add(1)).read_to_end(&mut bytes)?;
    if bytes.len() as u64 > limit {
        return Err(ReadError::TooLarge { limit });
    }
    Ok(bytes)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn special_files_are_named_and_not_read() {
        let dir = tempfile::tempdir().unwrap();
        match read_limited(dir.path(), 10) {
            Err(ReadError::NotAFile(k)) => assert_eq!(k, "a folder"),
            r => panic!("{r:?}"),
        }
        #[cfg(unix)]
        if Path::new("/dev/zero").exists() {
            match read_limited(Path::new("/dev/zero"), 10) {
                Err(ReadError::NotAFile(k)) => assert!(k.contains("character device"), "{k}"),
                r => panic!("{r:?}"),
            }
        }
        let p = dir.path().join("f");
        std::fs::write(&p, b"0123456789A").unwrap();
        assert!(matches!(
            read_limited(&p, 10),
            Err(ReadError::TooLarge { limit: 10 })
        ));
        assert_eq!(read_limited(&p, 11).unwrap().len(), 11);
        let e = read_limited(&dir.path().join("none"), 10)
            .unwrap_err()
            .to_string();
        assert!(!e.contains("os error"), "{e}");
    }
}
