//! The one implementation of touching files in a folder someone else may control.
//!
//! A shared analysis folder can ship symbolic links at any name, and a process running
//! beside statebook can swap a folder for a link while a write is under way. So every
//! file statebook writes or reads back for a check goes through this module, which never
//! follows a link it did not resolve and judge first:
//!
//! - The caller passes a path whose folder was already resolved (symbolic links followed,
//!   `..` removed) and judged by the sandbox. The folder is then opened component by
//!   component from `/` with `O_NOFOLLOW | O_DIRECTORY`, so a component that became a
//!   link since it was judged fails to open instead of leading elsewhere; every later
//!   step works on that folder handle (`openat`, `renameat`, `unlinkat`), never on the
//!   path again.
//! - A write goes to a temporary file created exclusively (`O_CREAT | O_EXCL |
//!   O_NOFOLLOW`) under an unpredictable name (`.NAME.sbtmp-<16 random hex digits>`) in the
//!   target's own folder, is flushed to disk, and is renamed onto the target after
//!   re-checking that the target is neither a folder nor a symbolic link. A crash leaves
//!   the old file or the new one, never half of one.
//! - Temporary files that an interrupted write left behind (our naming pattern only,
//!   regular files only, older than [`STALE_AFTER`]) are removed by the next write in
//!   the same folder.
//! - A lock file per analysis file (`.NAME.lock`, `flock`) serialises two renders of it.
//!
//! Text read from files is normalised by [`normalise_text`] (byte-order mark dropped,
//! CRLF and CR-only line ends turned into LF), so that no reader loses a line to them.
//!
//! The folder walk is the technique `openat(2)` was made for (POSIX.1-2008, "fd-relative
//! path names"); it closes the time-of-check-to-time-of-use window described by Bishop and
//! Dilger (1996), "Checking for race conditions in file accesses".

use std::borrow::Cow;
use std::io;
use std::path::{Component, Path, PathBuf};
use std::time::Duration;

/// Temporary files of our pattern older than this are taken as left by an interrupted
/// write and removed.
pub const STALE_AFTER: Duration = Duration::from_secs(300);

/// The marker between a target's name and the random part of its temporary file's name.
const TMP_MARK: &str = ".sbtmp-";

/// Drops a leading byte-order mark and turns CRLF and lone CR line ends into LF.
pub fn normalise_text(text: &str) -> Cow<'_, str> {
    let body = text.strip_prefix('\u{feff}').unwrap_or(text);
    if !body.contains('\r') {
        return if body.len() == text.len() {
            Cow::Borrowed(text)
        } else {
            Cow::Borrowed(body)
        };
    }
    Cow::Owned(body.replace("\r\n", "\n").replace('\r', "\n"))
}

/// 64 unpredictable bits: SipHash under the process's random keys (seeded from the
/// operating system) of a counter, the process id and the time.
pub fn random_u64() -> u64 {
    use std::hash::{BuildHasher, Hasher};
    static COUNTER: std::sync::atomic::AtomicU64 = std::sync::atomic::AtomicU64::new(0);
    let k = COUNTER.fetch_add(1, std::sync::atomic::Ordering::Relaxed);
    let mut h = std::collections::hash_map::RandomState::new().build_hasher();
    h.write_u64(k);
    h.write_u32(std::process::id());
    let now = std::time::SystemTime::now()
        .duration_since(std::time::UNIX_EPOCH)
        .map(|d| d.as_nanos())
        .unwrap_or(0);
    h.write_u128(now);
    h.finish()
}

/// A fresh random id of 16 lowercase hex digits (used for temporary names and run ids).
pub fn random_id() -> String {
    format!("{:016x}", random_u64())
}

/// The target's name and its folder, for a path that names a file.
fn split(path: &Path) -> io::Result<(&Path, String)> {
    let name = match path.components().next_back() {
        Some(Component::Normal(n)) => n.to_string_lossy().into_owned(),
        _ => return Err(is_a_folder(path)),
    };
    let dir = path
        .parent()
        .filter(|d| !d.as_os_str().is_empty())
        .ok_or_else(|| is_a_folder(path))?;
    Ok((dir, name))
}

fn is_a_folder(path: &Path) -> io::Error {
    io::Error::new(
        io::ErrorKind::IsADirectory,
        format!("{} is a folder, expected a file name", path.display()),
    )
}

fn refused(path: &Path, what: &str) -> io::Error {
    io::Error::new(
        io::ErrorKind::PermissionDenied,
        format!(
            "refused: {} {what} (it may lead outside the folder it was judged in)",
            path.display()
        ),
    )
}

/// The name of a temporary file for `name`, kept within the 255-byte name limit.
fn temporary_name(name: &str) -> String {
    let mut keep = name.len().min(200);
    while !name.is_char_boundary(keep) {
        keep -= 1;
    }
    format!(".{}{TMP_MARK}{}", &name[..keep], random_id())
}

/// Whether `file_name` is one of our temporary names (`.NAME.sbtmp-<16 hex>`).
fn is_our_temporary(file_name: &str) -> bool {
    let Some(at) = file_name.rfind(TMP_MARK) else {
        return false;
    };
    let tail = &file_name[at + TMP_MARK.len()..];
    file_name.starts_with('.')
        && at > 1
        && tail.len() == 16
        && tail.bytes().all(|b| b.is_ascii_hexdigit())
}

#[cfg(unix)]
mod imp {
    use super::*;
    use nix::errno::Errno;
    use nix::fcntl::{openat, renameat, AtFlags, Flock, FlockArg, OFlag};
    use nix::sys::stat::{fstat, fstatat, mkdirat, FileStat, Mode, SFlag};
    use nix::unistd::{unlinkat, UnlinkatFlags};
    use std::fs::File;
    use std::io::{Read, Write};
    use std::os::fd::OwnedFd;

    /// An open folder, found without following any symbolic link.
    pub struct Dir {
        fd: OwnedFd,
        path: PathBuf,
    }

    fn kind(st: &FileStat) -> SFlag {
        SFlag::from_bits_truncate(st.st_mode) & SFlag::S_IFMT
    }

    impl Dir {
        /// Opens the folder at `path` (absolute, already resolved) one component at a
        /// time, refusing any component that is a symbolic link or not a folder. With
        /// `create`, missing components are made.
        pub fn open(path: &Path, create: bool) -> io::Result<Dir> {
            if !path.is_absolute() {
                return Err(io::Error::new(
                    io::ErrorKind::InvalidInput,
                    format!("{} is not an absolute path", path.display()),
                ));
            }
            let flags = OFlag::O_DIRECTORY | OFlag::O_RDONLY | OFlag::O_CLOEXEC;
            let mut fd = nix::fcntl::open("/", flags, Mode::empty()).map_err(io::Error::from)?;
            let mut so_far = PathBuf::from("/");
            for c in path.components() {
                let part = match c {
                    Component::RootDir | Component::Prefix(_) | Component::CurDir => continue,
                    Component::ParentDir => return Err(refused(path, "holds `..`")),
                    Component::Normal(p) => p,
                };
                so_far.push(part);
                let flags = flags | OFlag::O_NOFOLLOW;
                let next = match openat(&fd, part, flags, Mode::empty()) {
                    Err(Errno::ENOENT) if create => {
                        match mkdirat(&fd, part, Mode::from_bits_truncate(0o777)) {
                            Ok(()) | Err(Errno::EEXIST) => {}
                            Err(e) => return Err(io::Error::from(e)),
                        }
                        openat(&fd, part, flags, Mode::empty())
                    }
                    other => other,
                };
                fd = match next {
                    Ok(f) => f,
                    Err(Errno::ELOOP) | Err(Errno::ENOTDIR) => {
                        return Err(refused(&so_far, "is a symbolic link or not a folder"))
                    }
                    Err(e) => {
                        return Err(io::Error::new(
                            io::Error::from(e).kind(),
                            format!("cannot open the folder {}: {e}", so_far.display()),
                        ))
                    }
                };
            }
            Ok(Dir {
                fd,
                path: path.to_path_buf(),
            })
        }

        /// What `name` in this folder is, without following a link (`None`: nothing).
        fn entry(&self, name: &str) -> io::Result<Option<SFlag>> {
            match fstatat(&self.fd, name, AtFlags::AT_SYMLINK_NOFOLLOW) {
                Ok(st) => Ok(Some(kind(&st))),
                Err(Errno::ENOENT) => Ok(None),
                Err(e) => Err(io::Error::from(e)),
            }
        }

        /// Refuses a target that is a folder or a symbolic link.
        fn check_target(&self, name: &str) -> io::Result<()> {
            match self.entry(name)? {
                Some(k) if k == SFlag::S_IFDIR => Err(is_a_folder(&self.path.join(name))),
                Some(k) if k == SFlag::S_IFLNK => {
                    Err(refused(&self.path.join(name), "is a symbolic link"))
                }
                _ => Ok(()),
            }
        }

        /// Creates `name` exclusively (never through a link) for writing.
        fn create_new(&self, name: &str, append: bool) -> Result<File, Errno> {
            let mut flags = OFlag::O_WRONLY
                | OFlag::O_CREAT
                | OFlag::O_EXCL
                | OFlag::O_NOFOLLOW
                | OFlag::O_CLOEXEC;
            if append {
                flags |= OFlag::O_APPEND;
            }
            openat(&self.fd, name, flags, Mode::from_bits_truncate(0o666)).map(File::from)
        }

        /// Removes temporary files of our pattern that an interrupted write left here.
        fn clean_stale(&self) {
            let Ok(list) = std::fs::read_dir(&self.path) else {
                return;
            };
            let now = std::time::SystemTime::now();
            for e in list.flatten() {
                let name = e.file_name().to_string_lossy().into_owned();
                if !is_our_temporary(&name) {
                    continue;
                }
                let Ok(st) = fstatat(&self.fd, name.as_str(), AtFlags::AT_SYMLINK_NOFOLLOW) else {
                    continue;
                };
                let modified =
                    std::time::UNIX_EPOCH + Duration::from_secs(st.st_mtime.max(0) as u64);
                let old = now
                    .duration_since(modified)
                    .is_ok_and(|age| age > STALE_AFTER);
                if kind(&st) == SFlag::S_IFREG
                    && st.st_uid == nix::unistd::geteuid().as_raw()
                    && old
                {
                    let _ = unlinkat(&self.fd, name.as_str(), UnlinkatFlags::NoRemoveDir);
                }
            }
        }
    }

    /// A file written to its temporary, waiting to be renamed onto its target.
    pub struct Pending {
        dir: Dir,
        tmp: String,
        name: String,
        done: bool,
    }

    impl Pending {
        /// The target path.
        pub fn target(&self) -> PathBuf {
            self.dir.path.join(&self.name)
        }

        /// Renames the temporary onto the target after re-checking the target.
        pub fn commit(mut self) -> io::Result<()> {
            self.dir.check_target(&self.name)?;
            renameat(
                &self.dir.fd,
                self.tmp.as_str(),
                &self.dir.fd,
                self.name.as_str(),
            )
            .map_err(io::Error::from)?;
            self.done = true;
            Ok(())
        }
    }

    impl Drop for Pending {
        fn drop(&mut self) {
            if !self.done {
                let _ = unlinkat(&self.dir.fd, self.tmp.as_str(), UnlinkatFlags::NoRemoveDir);
            }
        }
    }

    /// Writes `bytes` to a fresh temporary beside `path` (whose folder is resolved), ready
    /// to be renamed onto it.
    pub fn prepare(path: &Path, bytes: &[u8], create_dirs: bool) -> io::Result<Pending> {
        let (folder, name) = split(path)?;
        let dir = Dir::open(folder, create_dirs)?;
        dir.check_target(&name)?;
        dir.clean_stale();
        let mut attempt = 0;
        let (file, tmp) = loop {
            let tmp = temporary_name(&name);
            match dir.create_new(&tmp, false) {
                Ok(f) => break (f, tmp),
                Err(Errno::EEXIST) | Err(Errno::ELOOP) if attempt < 8 => attempt += 1,
                Err(e) => return Err(io::Error::from(e)),
            }
        };
        // Made before writing, so that a failed write removes the temporary.
        let pending = Pending {
            dir,
            tmp,
            name,
            done: false,
        };
        let mut file = file;
        file.write_all(bytes)?;
        file.sync_all()?;
        Ok(pending)
    }

    /// Creates a new file at `path` (whose folder is resolved) for appending, never
    /// through a link and never over an existing file.
    pub fn create_append(path: &Path, create_dirs: bool) -> io::Result<File> {
        let (folder, name) = split(path)?;
        let dir = Dir::open(folder, create_dirs)?;
        dir.create_new(&name, true).map_err(|e| match e {
            Errno::ELOOP => refused(path, "is a symbolic link"),
            e => io::Error::from(e),
        })
    }

    /// Reads the regular file `path` (whose folder is resolved) without following a link
    /// at its name; refuses anything larger than `max_bytes`.
    pub fn read_no_follow(path: &Path, max_bytes: u64) -> io::Result<Vec<u8>> {
        let (folder, name) = split(path)?;
        let dir = Dir::open(folder, false)?;
        let flags = OFlag::O_RDONLY | OFlag::O_NOFOLLOW | OFlag::O_CLOEXEC | OFlag::O_NONBLOCK;
        let fd = openat(&dir.fd, name.as_str(), flags, Mode::empty()).map_err(|e| match e {
            Errno::ELOOP => refused(path, "is a symbolic link"),
            e => io::Error::from(e),
        })?;
        let st = fstat(&fd).map_err(io::Error::from)?;
        if kind(&st) != SFlag::S_IFREG {
            return Err(refused(path, "is not a regular file"));
        }
        if st.st_size as u64 > max_bytes {
            return Err(io::Error::new(
                io::ErrorKind::InvalidData,
                format!(
                    "{} is {} bytes, more than the {max_bytes} bytes allowed",
                    path.display(),
                    st.st_size
                ),
            ));
        }
        let mut bytes = Vec::new();
        File::from(fd).take(max_bytes + 1).read_to_end(&mut bytes)?;
        if bytes.len() as u64 > max_bytes {
            return Err(io::Error::new(
                io::ErrorKind::InvalidData,
                format!("{} grew past {max_bytes} bytes while read", path.display()),
            ));
        }
        Ok(bytes)
    }

    /// An exclusive (or shared) lock on the lock file of `analysis`, held until dropped.
    pub struct Lock {
        _held: Flock<File>,
    }

    /// Locks `.NAME.lock` beside `analysis` (resolved folder), waiting for other holders.
    pub fn lock(analysis: &Path, exclusive: bool) -> io::Result<Lock> {
        let (folder, name) = split(analysis)?;
        let dir = Dir::open(folder, false)?;
        let lock_name = format!(".{name}.lock");
        let flags = OFlag::O_RDWR | OFlag::O_CREAT | OFlag::O_NOFOLLOW | OFlag::O_CLOEXEC;
        let fd = openat(
            &dir.fd,
            lock_name.as_str(),
            flags,
            Mode::from_bits_truncate(0o666),
        )
        .map_err(|e| match e {
            Errno::ELOOP => refused(&dir.path.join(&lock_name), "is a symbolic link"),
            e => io::Error::from(e),
        })?;
        let st = fstat(&fd).map_err(io::Error::from)?;
        if kind(&st) != SFlag::S_IFREG {
            return Err(refused(&dir.path.join(&lock_name), "is not a regular file"));
        }
        let arg = if exclusive {
            FlockArg::LockExclusive
        } else {
            FlockArg::LockShared
        };
        let held = Flock::lock(File::from(fd), arg).map_err(|(_, e)| io::Error::from(e))?;
        Ok(Lock { _held: held })
    }
}

#[cfg(not(unix))]
mod imp {
    //! Fallback without folder handles: exclusive creation and re-checks by path.
    use super::*;
    use std::fs::File;
    use std::io::{Read, Write};

    pub struct Pending {
        tmp: PathBuf,
        target: PathBuf,
        done: bool,
    }

    impl Pending {
        pub fn target(&self) -> PathBuf {
            self.target.clone()
        }
        pub fn commit(mut self) -> io::Result<()> {
            check_target(&self.target)?;
            std::fs::rename(&self.tmp, &self.target)?;
            self.done = true;
            Ok(())
        }
    }

    impl Drop for Pending {
        fn drop(&mut self) {
            if !self.done {
                let _ = std::fs::remove_file(&self.tmp);
            }
        }
    }

    fn check_target(p: &Path) -> io::Result<()> {
        match std::fs::symlink_metadata(p) {
            Ok(m) if m.is_dir() => Err(is_a_folder(p)),
            Ok(m) if m.file_type().is_symlink() => Err(refused(p, "is a symbolic link")),
            _ => Ok(()),
        }
    }

    pub fn prepare(path: &Path, bytes: &[u8], create_dirs: bool) -> io::Result<Pending> {
        let (folder, name) = split(path)?;
        if create_dirs {
            std::fs::create_dir_all(folder)?;
        }
        check_target(path)?;
        let tmp = folder.join(temporary_name(&name));
        let mut f = std::fs::OpenOptions::new()
            .write(true)
            .create_new(true)
            .open(&tmp)?;
        let pending = Pending {
            tmp,
            target: path.to_path_buf(),
            done: false,
        };
        f.write_all(bytes)?;
        f.sync_all()?;
        Ok(pending)
    }

    pub fn create_append(path: &Path, create_dirs: bool) -> io::Result<File> {
        let (folder, _) = split(path)?;
        if create_dirs {
            std::fs::create_dir_all(folder)?;
        }
        std::fs::OpenOptions::new()
            .append(true)
            .create_new(true)
            .open(path)
    }

    pub fn read_no_follow(path: &Path, max_bytes: u64) -> io::Result<Vec<u8>> {
        check_target(path)?;
        let mut bytes = Vec::new();
        File::open(path)?
            .take(max_bytes + 1)
            .read_to_end(&mut bytes)?;
        if bytes.len() as u64 > max_bytes {
            return Err(io::Error::new(
                io::ErrorKind::InvalidData,
                format!("{} is larger than {max_bytes} bytes", path.display()),
            ));
        }
        Ok(bytes)
    }

    pub struct Lock;

    pub fn lock(_analysis: &Path, _exclusive: bool) -> io::Result<Lock> {
        Ok(Lock)
    }
}

pub use imp::{create_append, lock, prepare, read_no_follow, Lock, Pending};

/// Writes `bytes` to `path` (its folder already resolved and judged) through an exclusive
/// temporary file and a rename; with `create_dirs`, missing folders on the way are made.
pub fn write_file(path: &Path, bytes: &[u8], create_dirs: bool) -> io::Result<()> {
    prepare(path, bytes, create_dirs)?.commit()
}

/// Lexically normalises a path: removes `.` and resolves `..` against earlier parts.
pub fn normalise(p: &Path) -> PathBuf {
    let mut out = PathBuf::new();
    for c in p.components() {
        match c {
            Component::CurDir => {}
            Component::ParentDir => {
                out.pop();
            }
            other => out.push(other.as_os_str()),
        }
    }
    out
}

/// `p` made absolute (against the working folder) and with symbolic links in its longest
/// existing prefix resolved; the missing rest is appended lexically.
pub fn resolve(p: &Path) -> PathBuf {
    let abs = if p.is_absolute() {
        p.to_path_buf()
    } else {
        std::env::current_dir().unwrap_or_default().join(p)
    };
    let p = normalise(&abs);
    let mut existing = p.clone();
    let mut rest = Vec::new();
    loop {
        if let Ok(c) = existing.canonicalize() {
            let mut out = c;
            for r in rest.iter().rev() {
                out.push(r);
            }
            return normalise(&out);
        }
        match (
            existing.file_name().map(|f| f.to_os_string()),
            existing.parent(),
        ) {
            (Some(name), Some(parent)) => {
                rest.push(name);
                existing = parent.to_path_buf();
            }
            _ => return p,
        }
    }
}

/// `p` with its folder resolved but its own name kept (a link at the name is not
/// followed): what a reader that refuses links at the name should open.
pub fn resolve_folder(p: &Path) -> PathBuf {
    let abs = if p.is_absolute() {
        p.to_path_buf()
    } else {
        std::env::current_dir().unwrap_or_default().join(p)
    };
    let abs = normalise(&abs);
    match (abs.parent(), abs.file_name()) {
        (Some(dir), Some(name)) => resolve(dir).join(name),
        _ => abs,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn text_is_normalised() {
        assert_eq!(normalise_text("\u{feff}a,b\r\n1,2\r3\n"), "a,b\n1,2\n3\n");
        assert!(matches!(normalise_text("plain\n"), Cow::Borrowed(_)));
    }

    #[test]
    fn temporary_names_are_ours_and_differ() {
        let a = temporary_name("out.csv");
        let b = temporary_name("out.csv");
        assert_ne!(a, b);
        assert!(is_our_temporary(&a), "{a}");
        assert!(!is_our_temporary(".out.csv.tmp-12-0"));
        assert!(!is_our_temporary("out.csv"));
    }
}
