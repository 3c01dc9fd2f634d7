//! Reading inputs with bounded memory, and writing outputs without ever losing a file.
//!
//! **Outputs** ([`write_outputs`]):
//! - an output path that resolves to one of the command's inputs (the same path, a symbolic
//!   link to it, or a hard link: the same device and inode) is refused before anything is
//!   written; so is an output that exists and is not a regular file (a directory, a device
//!   node, a FIFO, or a symbolic link to one), and two outputs that are the same file;
//! - every file goes through a unique temporary file in its own directory, is flushed to
//!   disk (`fsync`), and only then renamed over the old name; when a command writes several
//!   files, all temporaries are written before the first rename, so an error while writing
//!   leaves every old file as it was and no temporary behind;
//! - an output that is a symbolic link to a regular file replaces the file it points to (the
//!   link stays);
//! - a *new-file* output ([`write_new`], the meter profile of `explain --profile`) is never
//!   written over anything: it is refused if the name exists, and the temporary is linked
//!   into place only if the name is still free at that moment.
//!
//! **Inputs**: whole-file inputs ([`read_limited`]) are read up to a documented size, and a
//! sample file through [`LineLimit`], which refuses a line longer than [`MAX_LINE_BYTES`]
//! (an endless line, e.g. `/dev/zero`, fails at once, naming the line).

use std::io::{Read, Write};
use std::path::{Path, PathBuf};
use std::sync::Mutex;

use super::error::ReviewError;

/// Longest line of a sample file, bytes. A sample line is a few dozen bytes.
pub const MAX_LINE_BYTES: usize = 64 * 1024;

/// Characters of an input field echoed in an error message; longer ones are cut with "…".
pub const ECHO_CHARS: usize = 80;

/// `s` as echoed in an error message: at most [`ECHO_CHARS`] characters, then "…".
pub fn echo(s: &str) -> String {
    match s.char_indices().nth(ECHO_CHARS) {
        Some((at, _)) => format!("{}…", s.get(..at).unwrap_or(s)),
        None => s.to_string(),
    }
}

/// Read the whole file `path`, refusing more than `max_bytes` (named `what` in the message)
/// without reading past it.
///
/// # Errors
/// I/O errors, and a file larger than `max_bytes`.
pub fn read_limited(path: &str, max_bytes: u64, what: &str) -> Result<Vec<u8>, ReviewError> {
    let f = std::fs::File::open(path).map_err(|e| ReviewError::io(path, e))?;
    let len = f.metadata().map_err(|e| ReviewError::io(path, e))?.len();
    let too_big = || {
        ReviewError::Other(format!(
            "{path}: larger than {max_bytes} bytes, the largest {what} read; not read"
        ))
    };
    if len > max_bytes {
        return Err(too_big());
    }
    let mut out = Vec::with_capacity(usize::try_from(len).unwrap_or(0));
    f.take(max_bytes + 1)
        .read_to_end(&mut out)
        .map_err(|e| ReviewError::io(path, e))?;
    if out.len() as u64 > max_bytes {
        return Err(too_big());
    }
    Ok(out)
}

/// A reader that fails with [`std::io::ErrorKind::InvalidData`] as soon as a line grows past
/// `max` bytes, naming the line (1-based). Memory stays bounded on an endless line.
pub struct LineLimit<R> {
    inner: R,
    max: usize,
    /// Bytes since the last newline.
    current: usize,
    /// Newlines seen.
    newlines: u64,
}

impl<R> LineLimit<R> {
    /// Wrap `inner`; lines longer than `max` bytes are an error.
    pub fn new(inner: R, max: usize) -> Self {
        Self {
            inner,
            max,
            current: 0,
            newlines: 0,
        }
    }
    /// The wrapped reader.
    pub fn into_inner(self) -> R {
        self.inner
    }
}

impl<R: Read> Read for LineLimit<R> {
    fn read(&mut self, buf: &mut [u8]) -> std::io::Result<usize> {
        let n = self.inner.read(buf)?;
        let mut rest = buf.get(..n).unwrap_or(&[]);
        loop {
            match rest.iter().position(|&b| b == b'\n') {
                Some(i) => {
                    if self.current + i > self.max {
                        return Err(self.too_long());
                    }
                    self.newlines += 1;
                    self.current = 0;
                    rest = rest.get(i + 1..).unwrap_or(&[]);
                }
                None => {
                    self.current += rest.len();
                    if self.current > self.max {
                        return Err(self.too_long());
                    }
                    return Ok(n);
                }
            }
        }
    }
}

impl<R> LineLimit<R> {
    fn too_long(&self) -> std::io::Error {
        std::io::Error::new(
            std::io::ErrorKind::InvalidData,
            format!(
                "line {} is longer than {} bytes (an endless line, or not a text file?)",
                self.newlines + 1,
                self.max
            ),
        )
    }
}

/// Identity of an existing file: (device, inode) on unix.
#[cfg(unix)]
fn identity(m: &std::fs::Metadata) -> Option<(u64, u64)> {
    use std::os::unix::fs::MetadataExt;
    Some((m.dev(), m.ino()))
}

/// Identity of an existing file (not available here: paths are compared instead).
#[cfg(not(unix))]
fn identity(_m: &std::fs::Metadata) -> Option<(u64, u64)> {
    None
}

/// Where an output goes: the file its path resolves to (through symbolic links), and that
/// file's identity if it exists.
struct Target {
    named: String,
    path: PathBuf,
    id: Option<(u64, u64)>,
}

fn canonical_or_joined(path: &Path) -> PathBuf {
    if let Ok(c) = std::fs::canonicalize(path) {
        return c;
    }
    // A file that does not exist yet: its directory's canonical path and its name.
    let dir = match path.parent() {
        Some(d) if !d.as_os_str().is_empty() => d.to_path_buf(),
        _ => PathBuf::from("."),
    };
    match (std::fs::canonicalize(&dir), path.file_name()) {
        (Ok(d), Some(name)) => d.join(name),
        _ => path.to_path_buf(),
    }
}

fn kind_name(ft: std::fs::FileType) -> &'static str {
    if ft.is_dir() {
        return "a directory";
    }
    #[cfg(unix)]
    {
        use std::os::unix::fs::FileTypeExt;
        if ft.is_block_device() || ft.is_char_device() {
            return "a device";
        }
        if ft.is_fifo() {
            return "a FIFO";
        }
        if ft.is_socket() {
            return "a socket";
        }
    }
    "not a regular file"
}

fn target(named: &str, inputs: &[&str]) -> Result<Target, ReviewError> {
    let p = Path::new(named);
    let refuse = |why: String| ReviewError::Other(format!("{named}: {why}; nothing was written"));
    let (path, id) = match std::fs::metadata(p) {
        Ok(m) => {
            if !m.is_file() {
                let via = match std::fs::symlink_metadata(p) {
                    Ok(l) if l.file_type().is_symlink() => " (through a symbolic link)",
                    _ => "",
                };
                return Err(refuse(format!(
                    "the output is {}{via}, not a regular file",
                    kind_name(m.file_type())
                )));
            }
            (canonical_or_joined(p), identity(&m))
        }
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => {
            if std::fs::symlink_metadata(p).is_ok() {
                return Err(refuse(
                    "the output is a symbolic link to nothing; remove it or name another file"
                        .to_string(),
                ));
            }
            (canonical_or_joined(p), None)
        }
        Err(e) => return Err(ReviewError::io(named, e)),
    };
    for input in inputs {
        let ip = Path::new(input);
        let same = match (id, std::fs::metadata(ip).ok().as_ref().and_then(identity)) {
            (Some(a), Some(b)) => a == b,
            _ => canonical_or_joined(ip) == path,
        };
        if same {
            return Err(refuse(format!(
                "the output is the input `{input}` (the same file, a link to it, or a hard \
                 link); an input is never written over"
            )));
        }
    }
    Ok(Target {
        named: named.to_string(),
        path,
        id,
    })
}

/// Check the output paths `outputs` of a command whose inputs are `inputs`, before any work.
///
/// # Errors
/// An output that is an input, is not a regular file, or is named twice.
pub fn check_outputs(outputs: &[&str], inputs: &[&str]) -> Result<(), ReviewError> {
    targets(outputs, inputs).map(|_| ())
}

fn targets(outputs: &[&str], inputs: &[&str]) -> Result<Vec<Target>, ReviewError> {
    let mut out: Vec<Target> = Vec::new();
    for o in outputs {
        let t = target(o, inputs)?;
        if let Some(prev) = out
            .iter()
            .find(|p| p.path == t.path || (p.id.is_some() && p.id == t.id))
        {
            return Err(ReviewError::Other(format!(
                "{o}: the same file as the output {}; nothing was written",
                prev.named
            )));
        }
        out.push(t);
    }
    Ok(out)
}

/// Files written by this process (for the final message after an error).
static WRITTEN: Mutex<Vec<String>> = Mutex::new(Vec::new());

/// The files this process has written (renamed into place) so far.
pub fn written() -> Vec<String> {
    WRITTEN.lock().map(|w| w.clone()).unwrap_or_default()
}

fn note_written(name: &str) {
    if let Ok(mut w) = WRITTEN.lock() {
        w.push(name.to_string());
    }
}

fn sync_dir(dir: &Path) {
    // Makes the rename durable; not possible on every platform or file system, where the
    // rename is still atomic.
    #[cfg(unix)]
    if let Ok(d) = std::fs::File::open(dir) {
        let _ = d.sync_all();
    }
    #[cfg(not(unix))]
    let _ = dir;
}

/// An output being written: a temporary file in the output's directory, renamed into place
/// by [`commit`] together with the command's other outputs.
pub struct Staged {
    named: String,
    path: PathBuf,
    dir: PathBuf,
    tmp: tempfile::NamedTempFile,
}

impl Staged {
    /// A second handle on the temporary file, to write it (e.g. while a replay runs).
    ///
    /// # Errors
    /// I/O errors.
    pub fn reopen(&self) -> Result<std::fs::File, ReviewError> {
        self.tmp.reopen().map_err(|e| self.nothing(e))
    }
    /// The output's name as the user gave it.
    pub fn name(&self) -> &str {
        &self.named
    }
    fn nothing(&self, e: std::io::Error) -> ReviewError {
        ReviewError::Other(format!(
            "{}: {e} (while writing its temporary file in {}); nothing was written",
            self.named,
            self.dir.display()
        ))
    }
}

fn stage_target(t: Target) -> Result<Staged, ReviewError> {
    let dir = match t.path.parent() {
        Some(d) if !d.as_os_str().is_empty() => d.to_path_buf(),
        _ => PathBuf::from("."),
    };
    let tmp = tempfile::Builder::new()
        .prefix(".photon-review-")
        .suffix(".partial")
        .tempfile_in(&dir)
        .map_err(|e| {
            ReviewError::Other(format!(
                "{}: {e} (while creating its temporary file in {}); nothing was written",
                t.named,
                dir.display()
            ))
        })?;
    Ok(Staged {
        named: t.named,
        path: t.path,
        dir,
        tmp,
    })
}

/// Check `path` against `inputs` ([`check_outputs`]) and open its temporary file. Dropping
/// the result removes the temporary; [`commit`] renames it into place.
///
/// # Errors
/// A refused output, or a temporary file that cannot be created.
pub fn stage(path: &str, inputs: &[&str]) -> Result<Staged, ReviewError> {
    stage_target(target(path, inputs)?)
}

/// Flush every staged file to disk, then rename them all into place (all temporaries are
/// complete before the first rename).
///
/// # Errors
/// An error flushing (nothing written, no temporary left) or renaming (the message names what
/// was written).
pub fn commit(staged: Vec<Staged>) -> Result<(), ReviewError> {
    for s in &staged {
        s.tmp.as_file().sync_all().map_err(|e| s.nothing(e))?;
    }
    let mut done: Vec<String> = Vec::new();
    for s in staged {
        let Staged {
            named,
            path,
            dir,
            tmp,
        } = s;
        if let Err(e) = tmp.persist(&path) {
            let written = if done.is_empty() {
                "nothing was written".to_string()
            } else {
                format!("written before the error: {}", done.join(", "))
            };
            return Err(ReviewError::Other(format!(
                "{named}: {} (renaming its temporary file into place); {written}",
                e.error
            )));
        }
        sync_dir(&dir);
        note_written(&named);
        done.push(named);
    }
    Ok(())
}

/// Write every `(path, contents)` of a command whose inputs are `inputs`, together with the
/// already `staged` outputs: all checked ([`check_outputs`]), all written to temporaries and
/// flushed, then renamed into place.
///
/// # Errors
/// A refused output (nothing written), an error writing a temporary (nothing written, no
/// temporary left), or an error renaming (the message names what was written).
pub fn write_outputs_with(
    files: &[(&str, &[u8])],
    mut staged: Vec<Staged>,
    inputs: &[&str],
) -> Result<(), ReviewError> {
    let mut names: Vec<&str> = staged.iter().map(|s| s.named.as_str()).collect();
    names.extend(files.iter().map(|(n, _)| *n));
    let mut targets = targets(&names, inputs)?;
    let fresh = targets.split_off(staged.len());
    for (t, (_, contents)) in fresh.into_iter().zip(files) {
        let mut s = stage_target(t)?;
        s.tmp.write_all(contents).map_err(|e| s.nothing(e))?;
        staged.push(s);
    }
    commit(staged)
}

/// [`write_outputs_with`] without staged outputs.
///
/// # Errors
/// As [`write_outputs_with`].
pub fn write_outputs(files: &[(&str, &[u8])], inputs: &[&str]) -> Result<(), ReviewError> {
    write_outputs_with(files, Vec::new(), inputs)
}

/// Write `contents` to the **new** file `path` (a command whose inputs are `inputs`): refused
/// if `path` exists (whatever it is) or is an input; written to a temporary in the same
/// directory, flushed, and linked into place only if the name is still free then, so an
/// existing file is never replaced and no half-written file is ever visible under `path`.
///
/// # Errors
/// An existing or refused output (nothing written), an error writing the temporary (nothing
/// written, no temporary left), or the name taken while writing (nothing written).
pub fn write_new(path: &str, contents: &[u8], inputs: &[&str]) -> Result<(), ReviewError> {
    if std::fs::symlink_metadata(path).is_ok() {
        return Err(ReviewError::Other(format!(
            "{path}: exists; this output is only ever written as a new file (name another \
             file or remove it); nothing was written"
        )));
    }
    let mut s = stage_target(target(path, inputs)?)?;
    s.tmp.write_all(contents).map_err(|e| s.nothing(e))?;
    s.tmp.as_file().sync_all().map_err(|e| s.nothing(e))?;
    let Staged {
        named,
        path,
        dir,
        tmp,
    } = s;
    if let Err(e) = tmp.persist_noclobber(&path) {
        let why = if e.error.kind() == std::io::ErrorKind::AlreadyExists {
            "created by someone else while this one was written".to_string()
        } else {
            e.error.to_string()
        };
        return Err(ReviewError::Other(format!(
            "{named}: {why} (linking its temporary file into place); nothing was written"
        )));
    }
    sync_dir(&dir);
    note_written(&named);
    Ok(())
}
