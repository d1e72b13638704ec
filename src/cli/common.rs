//! Pieces shared by the commands: loading the graph, resolving names, and
//! writing output safely.

use causeway::graph::{self, Graph};
use causeway::{Error, Result};
use std::io::Write;
use std::path::Path;

/// Reads and parses a graph file, printing its warnings to stderr.
pub fn load_graph(path: &Path, quiet: bool) -> Result<Graph> {
    // Binary bytes are left to the parser, which names their line and column.
    let bytes = match open_input(path, "--graph", "graph file", false)? {
        Input::Bytes(b) => b,
        Input::File => std::fs::read(path).map_err(|e| Error::io(path, e))?,
    };
    let parsed = graph::parse_bytes(&bytes, &path.display().to_string())?;
    if !quiet {
        for w in &parsed.warnings {
            eprintln!("causeway: warning: {w}");
        }
    }
    Ok(parsed.graph)
}

pub use causeway::plan::{node as resolve, split_list};

/// The worker threads to use for `asked` (`--threads`): more than the
/// machine allows are cut, with a warning on stderr unless `quiet`.
pub fn threads(asked: usize, quiet: bool) -> usize {
    let machine = causeway::resources::Machine::now();
    if let (Some(cap), false) = (machine.thread_cap(asked), quiet) {
        eprintln!("causeway: warning: {}", cap.text(&super::Flags));
    }
    // 0 keeps its meaning (one per core) for the library to apply.
    if asked == 0 { 0 } else { machine.threads(asked) }
}

/// An input file that passed [`open_input`].
pub enum Input {
    /// A regular file, read later (as often as needed).
    File,
    /// The bytes of a file that can be read only once (a pipe, a device
    /// such as `/dev/stdin`), read whole now.
    Bytes(Vec<u8>),
}

/// Checks the input file `path` given to `flag` before it is read: each
/// refusal names the flag and the path and says what is wrong (no such
/// file, a folder, not readable; for a graph file (`data` false),
/// compressed; for a data file, neither text nor a format the data stage
/// reads, by its first bytes). `kind` names what the file should be
/// ("data file").
pub fn open_input(path: &Path, flag: &str, kind: &str, data: bool) -> Result<Input> {
    use std::io::{ErrorKind, Read};
    let shown = path.display();
    let refuse = |e: std::io::Error| {
        Error::input(match e.kind() {
            ErrorKind::NotFound => format!("{flag} {shown}: no such file"),
            ErrorKind::PermissionDenied => format!("{flag} {shown}: cannot be read: permission denied"),
            _ => format!("{flag} {shown}: cannot be read: {e}"),
        })
    };
    let meta = std::fs::metadata(path).map_err(refuse)?;
    if meta.is_dir() {
        return Err(Error::input(format!("{flag} {shown}: is a folder, not a {kind}")));
    }
    let mut f = std::fs::File::open(path).map_err(refuse)?;
    // The first bytes, enough to tell text from compressed or binary data.
    let mut head = Vec::with_capacity(8192);
    (&mut f).take(8192).read_to_end(&mut head).map_err(refuse)?;
    // A device or pipe is read whole below: binary data (`/dev/zero`) is
    // refused first, as it may never end.
    let what = if data {
        causeway::data::unreadable(&head)
    } else if !meta.is_file() {
        causeway::data::not_text(&head)
    } else {
        causeway::data::compressed(&head)
            .map(|name| format!("looks compressed ({name}); decompress it first"))
    };
    if let Some(what) = what {
        return Err(Error::input(format!("{flag} {shown}: {what}")));
    }
    if meta.is_file() {
        return Ok(Input::File);
    }
    f.read_to_end(&mut head).map_err(refuse)?;
    Ok(Input::Bytes(head))
}

/// The `--delimiter` flag's values.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum DelimiterArg {
    /// Comma-separated values.
    Comma,
    /// Tab-separated values.
    Tab,
    /// Semicolon-separated values.
    Semicolon,
}

impl From<DelimiterArg> for causeway::data::Delimiter {
    fn from(d: DelimiterArg) -> Self {
        use causeway::data::Delimiter;
        match d {
            DelimiterArg::Comma => Delimiter::Comma,
            DelimiterArg::Tab => Delimiter::Tab,
            DelimiterArg::Semicolon => Delimiter::Semicolon,
        }
    }
}

/// Writes `text` to standard output: see [`print_bytes`].
pub fn print_stdout(text: &str) -> Result<()> {
    print_bytes(text.as_bytes())
}

/// Writes `bytes` to standard output: see [`print_with`].
pub fn print_bytes(bytes: &[u8]) -> Result<()> {
    print_with(|w| w.write_all(bytes).map_err(|e| Error::io("standard output", e)))
}

/// The one place that writes standard output: `fill` writes to it
/// (buffered), reporting write failures as [`Error::Io`]. A reader that has
/// gone away (`causeway ... | head -1`) is not an error: the rest of the
/// output is dropped quietly and the command ends with its usual exit code.
pub fn print_with(fill: impl FnOnce(&mut dyn Write) -> Result<()>) -> Result<()> {
    let mut out = std::io::BufWriter::new(std::io::stdout().lock());
    let written = fill(&mut out).and_then(|()| out.flush().map_err(|e| Error::io("standard output", e)));
    match written {
        Err(Error::Io { source, .. }) if source.kind() == std::io::ErrorKind::BrokenPipe => Ok(()),
        Err(Error::Io { source, .. }) => Err(Error::io("standard output", source)),
        other => other,
    }
}

/// Pretty JSON with a final newline.
pub fn to_json<T: serde::Serialize>(value: &T) -> Result<String> {
    let fail = |e: serde_json::Error| Error::Internal(format!("cannot write the JSON: {e}"));
    let mut v = serde_json::to_value(value).map_err(fail)?;
    causeway::report::json::tidy_settings(&mut v);
    let mut s = serde_json::to_string_pretty(&v).map_err(fail)?;
    s.push('\n');
    Ok(s)
}

/// Writes `text` to `path` through a temporary file in the same folder,
/// renamed into place; refuses to write over any of `inputs`.
pub fn write_atomic(path: &Path, text: &[u8], inputs: &[&Path]) -> Result<()> {
    write_atomic_with(path, inputs, |w| {
        w.write_all(text).map_err(|e| Error::io(path, e))
    })
}

/// Writes `path` through a temporary file in the same folder that `fill`
/// writes to, renamed into place once `fill` succeeds; refuses to write
/// over any of `inputs`. When `fill` fails, or the process is interrupted
/// (Ctrl-C, or a termination request), the temporary file is removed and
/// `path` is left as it was.
pub fn write_atomic_with(
    path: &Path,
    inputs: &[&Path],
    fill: impl FnOnce(&mut (dyn Write + Send)) -> Result<()>,
) -> Result<()> {
    refuse_inputs(path, inputs)?;
    let dir = match path.parent() {
        Some(d) if !d.as_os_str().is_empty() => d,
        _ => Path::new("."),
    };
    let mut tmp = tempfile::NamedTempFile::new_in(dir).map_err(|e| Error::io(dir, e))?;
    let guard = interrupt::Removal::new(tmp.path());
    let filled = fill(&mut tmp);
    let filled = filled.and_then(|()| tmp.as_file_mut().flush().map_err(|e| Error::io(path, e)));
    if let Err(e) = filled {
        drop(guard);
        return Err(match e {
            Error::Io { source, .. } => Error::io(path, source),
            other => other,
        });
    }
    // A temporary file is private (0600); give the output the usual mode.
    #[cfg(unix)]
    {
        use std::os::unix::fs::PermissionsExt;
        let mode = std::fs::metadata(path)
            .map(|m| m.permissions().mode())
            .unwrap_or(0o644);
        let _ = tmp
            .as_file()
            .set_permissions(std::fs::Permissions::from_mode(mode & 0o777));
    }
    let persisted = tmp.persist(path).map_err(|e| Error::io(path, e.error));
    drop(guard);
    persisted.map(|_| ())
}

/// Removal of a temporary file when the process is interrupted while it is
/// being written: the signal handler removes the registered file (`unlink`
/// is safe in a handler) and ends the process with 130, the shell's code for
/// an interrupted command.
mod interrupt {
    use std::ffi::{CString, c_char};
    use std::path::Path;
    use std::sync::Once;
    use std::sync::atomic::{AtomicPtr, Ordering};

    /// The temporary file being written, or null.
    static TEMP: AtomicPtr<c_char> = AtomicPtr::new(std::ptr::null_mut());
    static INSTALL: Once = Once::new();

    extern "C" fn on_signal(_: libc::c_int) {
        let p = TEMP.swap(std::ptr::null_mut(), Ordering::SeqCst);
        // SAFETY: `p` is null or a NUL-terminated path leaked by `Removal::new`;
        // unlink and _exit are async-signal-safe.
        unsafe {
            if !p.is_null() {
                libc::unlink(p);
            }
            libc::_exit(130);
        }
    }

    /// While alive, an interruption removes the file at its path.
    pub struct Removal(*mut c_char);

    impl Removal {
        pub fn new(path: &Path) -> Removal {
            #[cfg(unix)]
            INSTALL.call_once(|| {
                let handler = on_signal as extern "C" fn(libc::c_int);
                // SAFETY: installs a handler that only calls async-signal-safe functions.
                unsafe {
                    libc::signal(libc::SIGINT, handler as libc::sighandler_t);
                    libc::signal(libc::SIGTERM, handler as libc::sighandler_t);
                }
            });
            use std::os::unix::ffi::OsStrExt;
            let raw =
                CString::new(path.as_os_str().as_bytes()).map_or(std::ptr::null_mut(), CString::into_raw);
            let old = TEMP.swap(raw, Ordering::SeqCst);
            free(old);
            Removal(raw)
        }
    }

    impl Drop for Removal {
        fn drop(&mut self) {
            // Unregister only our own file, then free its path.
            if TEMP
                .compare_exchange(self.0, std::ptr::null_mut(), Ordering::SeqCst, Ordering::SeqCst)
                .is_ok()
            {
                free(self.0);
            }
        }
    }

    fn free(p: *mut c_char) {
        if !p.is_null() {
            // SAFETY: `p` came from `CString::into_raw` and is freed once.
            drop(unsafe { CString::from_raw(p) });
        }
    }
}

/// The refusal to write `path` when it is one of `inputs`.
pub fn refuse_inputs(path: &Path, inputs: &[&Path]) -> Result<()> {
    for input in inputs {
        if same_file(path, input) {
            return Err(Error::input(format!(
                "refusing to write {}: it is an input file ({})",
                path.display(),
                input.display()
            )));
        }
    }
    Ok(())
}

/// Do `a` and `b` name the same file: the same path once links are
/// resolved, or (Unix) the same device and inode, as with a hard link?
fn same_file(a: &Path, b: &Path) -> bool {
    #[cfg(unix)]
    {
        use std::os::unix::fs::MetadataExt;
        if let (Ok(x), Ok(y)) = (std::fs::metadata(a), std::fs::metadata(b))
            && x.dev() == y.dev()
            && x.ino() == y.ino()
        {
            return true;
        }
    }
    match (std::fs::canonicalize(a), std::fs::canonicalize(b)) {
        (Ok(x), Ok(y)) => x == y,
        _ => a == b,
    }
}

/// The output formats, as a flag value.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum FormatArg {
    /// Plain text for the terminal.
    Text,
    /// JSON with the keys of the command-line contract.
    Json,
    /// Markdown tables.
    Markdown,
    /// A LaTeX article with booktabs tables.
    Latex,
    /// CSV tables.
    Csv,
}

impl From<FormatArg> for causeway::report::Format {
    fn from(f: FormatArg) -> Self {
        use causeway::report::Format;
        match f {
            FormatArg::Text => Format::Text,
            FormatArg::Json => Format::Json,
            FormatArg::Markdown => Format::Markdown,
            FormatArg::Latex => Format::Latex,
            FormatArg::Csv => Format::Csv,
        }
    }
}

/// The full command line, for the reproducibility stamp: `causeway`
/// followed by the arguments, quoted where a shell would need it.
pub fn command_line() -> String {
    let mut parts = vec!["causeway".to_string()];
    parts.extend(std::env::args().skip(1).map(|a| {
        if a.is_empty() || a.contains(|c: char| c.is_whitespace() || "'\"$;&|<>()*?`\\".contains(c)) {
            format!("'{}'", a.replace('\'', "'\\''"))
        } else {
            a
        }
    }));
    parts.join(" ")
}

/// Writes the files of a report bundle under `dir` (created if needed),
/// each through a temporary file; refuses to write over any input.
pub fn write_bundle(dir: &Path, files: &[causeway::report::bundle::File], inputs: &[&Path]) -> Result<()> {
    // Every file is checked before any is written, so a refusal leaves no
    // half-written bundle behind.
    for f in files {
        let path = dir.join(&f.path);
        refuse_inputs(&path, inputs)?;
        if let Some(parent) = path.parent() {
            for input in inputs {
                if same_file(parent, input) {
                    return Err(Error::input(format!(
                        "--out {}: refusing to use {} as a folder: it is an input file",
                        dir.display(),
                        parent.display()
                    )));
                }
            }
        }
    }
    for f in files {
        let path = dir.join(&f.path);
        if let Some(parent) = path.parent() {
            std::fs::create_dir_all(parent).map_err(|e| {
                Error::input(format!(
                    "--out {}: cannot create the folder {}: {e}",
                    dir.display(),
                    parent.display()
                ))
            })?;
        }
        write_atomic(&path, &f.bytes, inputs)?;
    }
    Ok(())
}
