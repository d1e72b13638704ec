//! Compressed delimited text: a gzip (flate2) or zstd (zstd) stream
//! decompressed as it is read, and the routing of a reader (standard
//! input) by its first bytes.

use super::{Compression, Format, PREFIX};
use crate::{Error, Result};
use std::io::Read;

/// A reader whose errors say that the compressed stream is damaged.
struct Decoding<R> {
    inner: R,
    name: &'static str,
}

impl<R: Read> Read for Decoding<R> {
    fn read(&mut self, buf: &mut [u8]) -> std::io::Result<usize> {
        self.inner.read(buf).map_err(|e| {
            let kind = if e.kind() == std::io::ErrorKind::UnexpectedEof {
                "is cut short"
            } else {
                "is corrupt"
            };
            std::io::Error::new(
                std::io::ErrorKind::InvalidData,
                format!(
                    "the {} stream {kind} ({e}); the file cannot be decompressed",
                    self.name
                ),
            )
        })
    }
}

/// `reader` decompressed by `compression` (as it is when `None`).
pub(crate) fn decompress<'a, R: Read + 'a>(
    reader: R,
    compression: Option<Compression>,
    source: &str,
) -> Result<Box<dyn Read + 'a>> {
    Ok(match compression {
        None => Box::new(reader),
        Some(Compression::Gzip) => Box::new(Decoding {
            inner: flate2::read::MultiGzDecoder::new(reader),
            name: "gzip",
        }),
        Some(Compression::Zstd) => Box::new(Decoding {
            inner: zstd::stream::read::Decoder::new(reader).map_err(|e| Error::io(source, e))?,
            name: "zstd",
        }),
    })
}

/// What a reader holds, told by its first bytes.
pub(crate) enum Routed<'a> {
    /// Delimited text (decompressed as it is read).
    Text(Box<dyn Read + 'a>),
    /// A binary format, read whole.
    Binary(Format, Vec<u8>),
}

/// `reader` routed by its first bytes: text, compressed text, or a binary
/// format (whose bytes are then all read).
pub(crate) fn route<'a, R: Read + 'a>(mut reader: R, source: &str) -> Result<Routed<'a>> {
    let mut prefix = Vec::with_capacity(PREFIX);
    (&mut reader)
        .take(PREFIX as u64)
        .read_to_end(&mut prefix)
        .map_err(|e| Error::io(source, e))?;
    match Format::from_content(&prefix) {
        Some(Format::Text(c)) => {
            let whole = std::io::Cursor::new(prefix).chain(reader);
            Ok(Routed::Text(decompress(whole, c, source)?))
        }
        Some(f) => {
            let mut bytes = prefix;
            reader.read_to_end(&mut bytes).map_err(|e| Error::io(source, e))?;
            Ok(Routed::Binary(f, bytes))
        }
        None => Ok(Routed::Text(Box::new(std::io::Cursor::new(prefix).chain(reader)))),
    }
}
