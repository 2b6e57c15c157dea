//! Reading spec files from disk without surprises: only regular files (a
//! named pipe or a device named `*.guard` would block or never end), opened
//! without blocking, and never more than the size limit plus one byte, so
//! that a huge or endless file costs no more than the limit.

use std::io::{self, Read};
use std::path::Path;

/// Whether an error says that links loop (`ELOOP`: too many levels of
/// symbolic links).
pub fn is_link_loop(e: &io::Error) -> bool {
    #[cfg(unix)]
    {
        e.raw_os_error() == Some(libc::ELOOP)
    }
    #[cfg(not(unix))]
    {
        let _ = e;
        false
    }
}

/// What a file that is not a regular file is, in words.
fn kind_of(meta: &std::fs::Metadata) -> &'static str {
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
        if t.is_socket() {
            return "a socket";
        }
        if t.is_char_device() || t.is_block_device() {
            return "a device";
        }
    }
    "not a regular file"
}

fn not_regular(meta: &std::fs::Metadata) -> io::Error {
    io::Error::new(
        io::ErrorKind::InvalidInput,
        format!("it is {}, not a regular file", kind_of(meta)),
    )
}

/// Reads at most `limit + 1` bytes of the regular file at `path` (following
/// links); anything else is an error saying what it is. The caller tells a
/// file over the limit by its length.
pub fn read_source(path: &Path, limit: usize) -> io::Result<Vec<u8>> {
    let meta = std::fs::metadata(path)?;
    if !meta.is_file() {
        return Err(not_regular(&meta));
    }
    let mut options = std::fs::OpenOptions::new();
    options.read(true);
    #[cfg(unix)]
    {
        use std::os::unix::fs::OpenOptionsExt;
        // Should the path turn into a pipe after the check, opening it must not block.
        options.custom_flags(libc::O_NONBLOCK);
    }
    let file = options.open(path)?;
    let meta = file.metadata()?;
    if !meta.is_file() {
        return Err(not_regular(&meta));
    }
    let want = (meta.len() as usize).min(limit.saturating_add(1));
    let mut bytes = Vec::with_capacity(want);
    file.take(limit as u64 + 1).read_to_end(&mut bytes)?;
    Ok(bytes)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn reads_at_most_the_limit_and_one_byte() {
        let dir = std::env::temp_dir().join(format!("guardband-read-{}", std::process::id()));
        std::fs::create_dir_all(&dir).unwrap();
        let path = dir.join("a.guard");
        std::fs::write(&path, vec![b'x'; 100]).unwrap();
        assert_eq!(read_source(&path, 10).unwrap().len(), 11);
        assert_eq!(read_source(&path, 1000).unwrap().len(), 100);
        let err = read_source(&dir, 10).unwrap_err();
        assert!(err.to_string().contains("a folder"), "{err}");
        let _ = std::fs::remove_dir_all(&dir);
    }

    #[cfg(unix)]
    #[test]
    fn a_device_is_refused_without_reading() {
        let err = read_source(Path::new("/dev/zero"), 10).unwrap_err();
        assert!(err.to_string().contains("a device"), "{err}");
    }
}
