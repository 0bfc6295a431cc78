//! The one open of a data file. Every byte the CSV reader consumes passes through [`Source`],
//! which hashes it (SHA-256 and size) on the way, so that the byte fingerprint describes exactly
//! the bytes that were parsed: a FIFO, a process substitution (`<(…)`, a `/dev/fd/N` path) or a
//! file that grows while it is read are read once and fingerprinted consistently.
//!
//! `Source` also keeps the bytes of the record being read (for the byte offset of the first byte
//! that is not UTF-8, without reading the file again) and stops a record that grows past
//! [`MAX_RECORD_BYTES`](super::limits::MAX_RECORD_BYTES), so that a file without line breaks
//! (`/dev/zero`, a binary file) costs bounded memory.

mod once;

use super::checks::FileFacts;
use super::fingerprint::hex;
use super::limits::MAX_RECORD_BYTES;
use crate::error::{Error, Result};
use sha2::{Digest, Sha256};
use std::fs::File;
use std::io::{self, ErrorKind, Read};
use std::path::Path;

/// The DATA argument that means standard input.
pub const STDIN: &str = "-";

/// How standard input is named in messages and in the dossier.
pub const STDIN_NAME: &str = "standard input";

/// Whether `path` is [`STDIN`].
pub fn is_stdin(path: &Path) -> bool {
    path.as_os_str() == STDIN
}

/// The name of a data path in messages: the path, or [`STDIN_NAME`].
pub fn display_name(path: &Path) -> String {
    match is_stdin(path) {
        true => STDIN_NAME.to_string(),
        false => path.display().to_string(),
    }
}

#[cfg(unix)]
fn stdin_file() -> io::Result<File> {
    use std::os::fd::AsFd;
    Ok(File::from(io::stdin().as_fd().try_clone_to_owned()?))
}

#[cfg(not(unix))]
fn stdin_file() -> io::Result<File> {
    Err(io::Error::new(
        ErrorKind::Unsupported,
        "reading data from standard input needs a Unix system; give the file's path",
    ))
}

/// The marker inside the `io::Error` a [`Source`] returns when a record grows past the limit.
#[derive(Debug)]
pub struct RecordTooLong;

impl std::fmt::Display for RecordTooLong {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(f, "a record is longer than {MAX_RECORD_BYTES} bytes")
    }
}

impl std::error::Error for RecordTooLong {}

/// Whether an I/O error is the record limit of a [`Source`].
pub fn is_record_too_long(error: &io::Error) -> bool {
    error
        .get_ref()
        .is_some_and(|inner| inner.is::<RecordTooLong>())
}

/// An opened data file that hashes every byte read from it.
pub struct Source {
    input: Box<dyn Read + Send>,
    hasher: Sha256,
    /// Bytes read so far.
    size: u64,
    /// The bytes from offset `window_start` to `size`: the current record and what was read ahead.
    window: Vec<u8>,
    window_start: u64,
    /// Offset at which the record being read starts.
    record_start: u64,
    /// The first [`HEAD_BYTES`] bytes of the file, for what its signature says.
    head: Vec<u8>,
    /// Bytes taken from the input by [`Source::peek`] and not yet read (nor hashed).
    peeked: Vec<u8>,
}

/// Bytes of finished records kept before the window is compacted.
const COMPACT_AFTER: usize = 1 << 20;

/// How many bytes of the start of a file are kept for its signature.
const HEAD_BYTES: usize = 16;

impl Source {
    /// Opens `path` (shown as `file` in messages) once. Every problem is one sentence chosen from
    /// the error's kind: absent, a folder, a symbolic link loop, permission denied.
    /// The path [`STDIN`] (`-`) opens standard input instead. A file that is not a regular file
    /// (standard input, a pipe, a FIFO, a device) is opened at most once per process: its bytes
    /// can be read only once, so a second reading is refused rather than fingerprinting what
    /// happens to be left.
    pub fn open(path: &Path, file: &str) -> Result<Source> {
        if is_stdin(path) {
            return Source::stdin();
        }
        once::refuse_second_read(path, file)?;
        let opened = File::open(path).map_err(|e| open_error(file, &e))?;
        let metadata = opened.metadata().map_err(|e| open_error(file, &e))?;
        if metadata.is_dir() {
            return Err(Error::input(format!(
                "data file '{file}' is a folder, not a CSV file"
            )));
        }
        once::claim(&metadata, file)?;
        Ok(Source::from_reader(Box::new(opened)))
    }

    /// Standard input, read through a duplicate of its descriptor. A terminal is refused: the
    /// data must be piped or redirected, not typed.
    fn stdin() -> Result<Source> {
        use std::io::IsTerminal;
        let file = STDIN_NAME;
        let opened = stdin_file().map_err(|e| open_error(file, &e))?;
        if opened.is_terminal() {
            return Err(Error::input(
                "no data on standard input: DATA '-' reads standard input, which is a terminal \
                 here; pipe or redirect a CSV file into it (… | forebear COMMAND - or \
                 forebear COMMAND - < data.csv), or give the file's path instead of '-'",
            ));
        }
        let metadata = opened.metadata().map_err(|e| open_error(file, &e))?;
        once::claim(&metadata, file)?;
        Ok(Source::from_reader(Box::new(opened)))
    }

    /// A source over any reader (for tests and in-memory data).
    pub fn from_reader(input: Box<dyn Read + Send>) -> Source {
        Source {
            input,
            hasher: Sha256::new(),
            size: 0,
            window: Vec::new(),
            window_start: 0,
            record_start: 0,
            head: Vec::new(),
            peeked: Vec::new(),
        }
    }

    /// Up to `n` bytes of the start of the input, without consuming them: the next reads return
    /// them first (and hash them then), so that the format can be told before a reader is chosen.
    /// Reads only while `undecided` says the bytes so far do not yet tell (so that a pipe whose
    /// writer sent a short header and waits is not waited for).
    pub fn peek(
        &mut self,
        n: usize,
        file: &str,
        undecided: impl Fn(&[u8]) -> bool,
    ) -> Result<&[u8]> {
        while self.peeked.len() < n && undecided(&self.peeked) {
            let mut block = vec![0u8; n - self.peeked.len()];
            match self.input.read(&mut block) {
                Ok(0) => break,
                Ok(got) => self.peeked.extend_from_slice(&block[..got]),
                Err(e) if e.kind() == ErrorKind::Interrupted => {}
                Err(e) => return Err(read_error(file, &e)),
            }
        }
        Ok(&self.peeked[..n.min(self.peeked.len())])
    }

    /// Reads the whole input (for the binary formats, which are parsed from memory): its bytes,
    /// and the fingerprint of exactly those bytes. Stops with an error past `limit` bytes.
    pub fn read_all(mut self, file: &str, limit: u64) -> Result<(Vec<u8>, FileFacts)> {
        let mut bytes = Vec::new();
        let facts = self.read_rest(file, |block| {
            bytes.extend_from_slice(block);
            if bytes.len() as u64 > limit {
                return Err(Error::input(format!(
                    "data file '{file}' is larger than {}, the most forebear reads of a binary \
                     data file; leave out the rows or columns the study does not need",
                    super::limits::size_text(limit as usize)
                )));
            }
            Ok(())
        })?;
        Ok((bytes, facts))
    }

    /// Marks the start of the next record at file offset `offset` (as the CSV reader counts):
    /// bytes before it are no longer needed (and dropped in large steps).
    pub fn begin_record(&mut self, offset: u64) {
        self.record_start = offset;
        // Compact only once a good share is behind: moving the read-ahead bytes to the front at
        // every record would cost a copy of the CSV reader's buffer per row.
        let behind = offset.saturating_sub(self.window_start) as usize;
        if behind >= COMPACT_AFTER {
            let behind = behind.min(self.window.len());
            self.window.drain(..behind);
            self.window_start += behind as u64;
        }
    }

    /// The kept bytes from file offset `from` to `to` (clipped to what is kept), and the offset of
    /// the first of them.
    pub fn kept(&self, from: u64, to: u64) -> (&[u8], u64) {
        let start = from.max(self.window_start);
        let a = (start - self.window_start) as usize;
        let b = (to.saturating_sub(self.window_start) as usize).min(self.window.len());
        (&self.window[a.min(b)..b], start)
    }

    /// The first bytes of the file (up to 16).
    pub fn head(&self) -> &[u8] {
        &self.head
    }

    /// Reads what the CSV reader left (nothing, normally: it reads to the end of the input) so
    /// that the fingerprint covers every byte of the file, and returns it.
    pub fn finish(mut self, file: &str) -> Result<FileFacts> {
        self.read_rest(file, |_| Ok(()))
    }

    /// Reads the bytes peeked at and everything after them to the end of the input, hashing and
    /// counting each and handing it to `keep`; returns the fingerprint of the whole input.
    fn read_rest(
        &mut self,
        file: &str,
        mut keep: impl FnMut(&[u8]) -> Result<()>,
    ) -> Result<FileFacts> {
        let left = std::mem::take(&mut self.peeked);
        self.hasher.update(&left);
        self.size += left.len() as u64;
        keep(&left)?;
        let mut block = vec![0u8; 1 << 16];
        loop {
            match self.input.read(&mut block) {
                Ok(0) => break,
                Ok(n) => {
                    self.hasher.update(&block[..n]);
                    self.size += n as u64;
                    keep(&block[..n])?;
                }
                Err(e) if e.kind() == ErrorKind::Interrupted => {}
                Err(e) => return Err(read_error(file, &e)),
            }
        }
        Ok(FileFacts {
            size_bytes: self.size,
            sha256: hex(&self.hasher.clone().finalize()),
            ..FileFacts::default()
        })
    }
}

impl Read for Source {
    fn read(&mut self, buf: &mut [u8]) -> io::Result<usize> {
        // The CSV reader asks for more only when it has consumed everything read so far, so
        // `size - record_start` is the length of the record being read.
        if self.size - self.record_start > MAX_RECORD_BYTES as u64 {
            return Err(io::Error::other(RecordTooLong));
        }
        let n = if self.peeked.is_empty() {
            self.input.read(buf)?
        } else {
            let n = buf.len().min(self.peeked.len());
            buf[..n].copy_from_slice(&self.peeked[..n]);
            self.peeked.drain(..n);
            n
        };
        self.hasher.update(&buf[..n]);
        self.window.extend_from_slice(&buf[..n]);
        if self.head.len() < HEAD_BYTES {
            let more = (HEAD_BYTES - self.head.len()).min(n);
            self.head.extend_from_slice(&buf[..more]);
        }
        self.size += n as u64;
        Ok(n)
    }
}

/// The sentence for a data file that cannot be read.
fn read_error(file: &str, error: &io::Error) -> Error {
    Error::input(format!(
        "data file '{file}' cannot be read: {}",
        super::cells::one_line(&error.to_string())
    ))
}

/// The sentence for a data file that cannot be opened, from the error's kind (never its text).
fn open_error(file: &str, error: &io::Error) -> Error {
    let why = match error.kind() {
        ErrorKind::NotFound => {
            return Error::input(format!("data file '{file}' does not exist; check the path"))
        }
        ErrorKind::PermissionDenied => {
            "permission denied; make it readable (chmod u+r) or copy it somewhere readable"
                .to_string()
        }
        ErrorKind::NotADirectory => "a part of the path is not a folder; check the path".into(),
        _ if is_link_loop(error) => "the path is a symbolic link loop (a link that leads back \
             to itself, or more links in a row than the system follows); point the path at the \
             file itself"
            .into(),
        _ => super::cells::one_line(&error.to_string()),
    };
    Error::input(format!("cannot open data file '{file}': {why}"))
}

#[cfg(unix)]
fn is_link_loop(error: &io::Error) -> bool {
    error.raw_os_error() == Some(libc::ELOOP)
}

#[cfg(not(unix))]
fn is_link_loop(_error: &io::Error) -> bool {
    false
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_byte_read_is_hashed_and_counted() {
        let mut source = Source::from_reader(Box::new(&b"abc"[..]));
        let mut first = [0u8; 2];
        assert_eq!(source.read(&mut first).unwrap(), 2);
        // FIPS 180-2, Appendix B.1: SHA-256("abc"), the last byte read by `finish`.
        let facts = source.finish("t").unwrap();
        assert_eq!(
            facts.sha256,
            "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"
        );
        assert_eq!(facts.size_bytes, 3);
    }

    #[test]
    fn the_window_keeps_the_current_record_only() {
        let mut source = Source::from_reader(Box::new(&b"ab\ncd\n"[..]));
        let mut all = [0u8; 6];
        assert_eq!(source.read(&mut all).unwrap(), 6);
        source.begin_record(3);
        assert_eq!(source.kept(3, 6), (&b"cd\n"[..], 3));
        let mut long = Source::from_reader(Box::new(io::repeat(b'x').take(3 << 20)));
        let mut block = vec![0u8; 1 << 16];
        while long.read(&mut block).unwrap() > 0 {}
        long.begin_record((2 << 20) + 5);
        assert_eq!(long.kept(0, u64::MAX).1, (2 << 20) + 5);
        assert_eq!(long.window.len(), (1 << 20) - 5);
    }

    #[test]
    fn peeked_bytes_are_read_and_hashed_once() {
        let mut source = Source::from_reader(Box::new(&b"abc"[..]));
        assert_eq!(source.peek(2, "t", |_| true).unwrap(), b"ab");
        let mut first = [0u8; 1];
        assert_eq!(source.read(&mut first).unwrap(), 1);
        assert_eq!(&first, b"a");
        let facts = source.finish("t").unwrap();
        // FIPS 180-2, Appendix B.1: SHA-256("abc").
        assert_eq!(
            facts.sha256,
            "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"
        );
        let mut whole = Source::from_reader(Box::new(&b"abc"[..]));
        assert_eq!(whole.peek(8, "t", |_| true).unwrap(), b"abc");
        let mut decided = Source::from_reader(Box::new(&b"abc"[..]));
        assert_eq!(decided.peek(8, "t", |_| false).unwrap(), b"");
        let (bytes, facts) = whole.read_all("t", 100).unwrap();
        assert_eq!((bytes.as_slice(), facts.size_bytes), (&b"abc"[..], 3));
        assert!(facts.sha256.starts_with("ba7816bf"));
    }

    #[test]
    fn a_record_past_the_limit_stops_the_reading() {
        let mut source = Source::from_reader(Box::new(io::repeat(0)));
        let mut block = vec![0u8; 1 << 16];
        let mut read = 0usize;
        let error = loop {
            match source.read(&mut block) {
                Ok(n) => read += n,
                Err(e) => break e,
            }
        };
        assert!(read > MAX_RECORD_BYTES);
        assert!(is_record_too_long(&error));
        assert!(source.window.len() <= MAX_RECORD_BYTES + block.len());
    }
}
