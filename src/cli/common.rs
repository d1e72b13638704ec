//! Pieces shared by the commands: loading the graph, resolving names, and
//! writing output safely.

use causeway::graph::{self, Graph};
use causeway::{Error, Result};
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
/// file, a folder, not readable, compressed, or with `binary` binary rather
/// than text). `kind` names what the file should be ("data file").
pub fn open_input(path: &Path, flag: &str, kind: &str, binary: bool) -> Result<Input> {
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
    // refused first whatever `binary` says, as it may never end.
    let what = if binary || !meta.is_file() {
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

/// The one place that writes standard output. A reader that has gone away
/// (`causeway ... | head -1`) is not an error: the rest of the output is
/// dropped quietly and the command ends with its usual exit code.
pub fn print_bytes(bytes: &[u8]) -> Result<()> {
    use std::io::Write;
    let mut out = std::io::stdout().lock();
    match out.write_all(bytes).and_then(|()| out.flush()) {
        Ok(()) => Ok(()),
        Err(e) if e.kind() == std::io::ErrorKind::BrokenPipe => Ok(()),
        Err(e) => Err(Error::io("standard output", e)),
    }
}

/// Pretty JSON with a final newline.
pub fn to_json<T: serde::Serialize>(value: &T) -> Result<String> {
    let fail = |e: serde_json::Error| Error::Numerical(format!("cannot write the JSON: {e}"));
    let mut v = serde_json::to_value(value).map_err(fail)?;
    causeway::report::json::tidy_settings(&mut v);
    let mut s = serde_json::to_string_pretty(&v).map_err(fail)?;
    s.push('\n');
    Ok(s)
}

/// Writes `text` to `path` through a temporary file in the same folder,
/// renamed into place; refuses to write over any of `inputs`.
pub fn write_atomic(path: &Path, text: &[u8], inputs: &[&Path]) -> Result<()> {
    refuse_inputs(path, inputs)?;
    let dir = match path.parent() {
        Some(d) if !d.as_os_str().is_empty() => d,
        _ => Path::new("."),
    };
    let mut tmp = tempfile::NamedTempFile::new_in(dir).map_err(|e| Error::io(dir, e))?;
    std::io::Write::write_all(&mut tmp, text).map_err(|e| Error::io(path, e))?;
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
    tmp.persist(path).map_err(|e| Error::io(path, e.error))?;
    Ok(())
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
