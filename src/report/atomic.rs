//! Atomic file writes: a temporary file in the target folder, written, flushed and synced, then
//! renamed over the target. A reader (or a run killed half way) sees the old file or the new one,
//! never a truncated one.

use std::io::Write;
use std::path::Path;

/// Write `bytes` to `path` atomically.
///
/// An existing target must be a regular file (a device, FIFO, folder or symbolic link is
/// refused, never replaced) and keeps its permissions. The temporary file is created
/// exclusively (`create_new`), so a file or link planted at its name is never written through.
pub fn write_atomic(path: &Path, bytes: &[u8]) -> std::io::Result<()> {
    let dir = match path.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => std::path::PathBuf::from("."),
    };
    let name = path
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_else(|| "output".into());
    let existing = match std::fs::symlink_metadata(path) {
        Ok(m) if m.is_file() => Some(m.permissions()),
        Ok(m) => {
            let what = if m.file_type().is_symlink() {
                "a symbolic link"
            } else if m.is_dir() {
                "a folder"
            } else {
                "not a regular file (a device or FIFO)"
            };
            return Err(std::io::Error::new(
                std::io::ErrorKind::InvalidInput,
                format!("{} is {what}; refusing to replace it", path.display()),
            ));
        }
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => None,
        Err(e) => return Err(e),
    };
    let tmp = dir.join(format!(".{name}.tmp-{}", std::process::id()));
    let open = || {
        std::fs::OpenOptions::new()
            .write(true)
            .create_new(true)
            .open(&tmp)
    };
    let mut f = match open() {
        Ok(f) => f,
        Err(e) if e.kind() == std::io::ErrorKind::AlreadyExists => {
            // Left by an earlier process with our id (killed): it is ours to replace.
            std::fs::remove_file(&tmp)?;
            open()?
        }
        Err(e) => return Err(e),
    };
    let result = (|| {
        f.write_all(bytes)?;
        f.flush()?;
        if let Some(p) = existing {
            f.set_permissions(p)?;
        }
        f.sync_all()?;
        drop(f);
        std::fs::rename(&tmp, path)
    })();
    if result.is_err() {
        let _ = std::fs::remove_file(&tmp);
    }
    result
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn replaces_whole_file() {
        let dir = std::env::temp_dir().join(format!("tr-atomic-{}", std::process::id()));
        std::fs::create_dir_all(&dir).unwrap();
        let p = dir.join("a.json");
        write_atomic(&p, b"first version, long").unwrap();
        write_atomic(&p, b"second").unwrap();
        assert_eq!(std::fs::read_to_string(&p).unwrap(), "second");
        let leftovers: Vec<_> = std::fs::read_dir(&dir).unwrap().collect();
        assert_eq!(leftovers.len(), 1, "no temporary file left behind");
        std::fs::remove_dir_all(&dir).unwrap();
    }

    #[cfg(unix)]
    #[test]
    fn keeps_mode_and_refuses_links() {
        use std::os::unix::fs::PermissionsExt;
        let dir = std::env::temp_dir().join(format!("tr-atomic-mode-{}", std::process::id()));
        std::fs::create_dir_all(&dir).unwrap();
        let p = dir.join("a.json");
        std::fs::write(&p, "x").unwrap();
        std::fs::set_permissions(&p, std::fs::Permissions::from_mode(0o600)).unwrap();
        write_atomic(&p, b"y").unwrap();
        let mode = std::fs::metadata(&p).unwrap().permissions().mode() & 0o777;
        assert_eq!(mode, 0o600);
        let l = dir.join("link.json");
        std::os::unix::fs::symlink(&p, &l).unwrap();
        assert!(write_atomic(&l, b"z").is_err());
        assert_eq!(std::fs::read_to_string(&p).unwrap(), "y");
        std::fs::remove_dir_all(&dir).unwrap();
    }
}
