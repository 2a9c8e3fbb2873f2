//! A shard file's framing: the magic line, the header line, the records
//! and the checked trailer; writing a shard, opening one, and reading its
//! records back in trial order.

use std::io::{BufRead, BufReader, Read, Seek, SeekFrom, Write};
use std::time::Instant;

use sha2::{Digest, Sha256};

use super::codec::{Bytes, Codec};
use super::{FORMAT_VERSION, MAGIC, RunKind, ShardError, ShardHeader, TRAILER_LEN};
use crate::model::{Model, Policy};
use crate::outcome::TrialOutcome;
use crate::run::{BLOCK, Progress, for_each_trial};
use crate::sim::Simulator;

/// The trailer's first bytes.
const TRAILER_MAGIC: &[u8; 8] = b"WOSHEND1";
/// The longest header line read (the embedded scenario text is in it).
const MAX_HEADER: u64 = 256 << 20;

/// A [`Write`] that hashes and counts what passes through.
struct Hashing<W> {
    inner: W,
    hash: Sha256,
    bytes: u64,
}

impl<W: Write> Hashing<W> {
    fn put(&mut self, b: &[u8]) -> Result<(), ShardError> {
        self.hash.update(b);
        self.bytes += b.len() as u64;
        self.inner
            .write_all(b)
            .map_err(|e| ShardError::Write(e.to_string()))
    }
}

/// What [`write_shard`] wrote.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Written {
    /// Per-trial records (trials times policies).
    pub records: u64,
    /// Bytes of the whole file.
    pub bytes: u64,
    /// Bytes of the records alone.
    pub record_bytes: u64,
    pub seconds: f64,
}

/// Run the trials of `header`'s shard for each of `policies` (the header's,
/// in its order) and write the shard file to `out`.
///
/// # Errors
/// [`ShardError::Interrupted`] when the observer cancels the run, and
/// [`ShardError::Write`] when `out` fails. Nothing is written that a reader
/// would take for a whole shard unless the run completed: the trailer comes
/// last.
pub fn write_shard<W: Write>(
    header: &ShardHeader,
    model: &Model,
    policies: &[Policy],
    progress: &dyn Progress,
    out: W,
) -> Result<Written, ShardError> {
    let start = Instant::now();
    let codec = Codec::new(model);
    let mut w = Hashing {
        inner: out,
        hash: Sha256::new(),
        bytes: 0,
    };
    w.put(format!("{MAGIC} {FORMAT_VERSION}\n").as_bytes())?;
    let json = serde_json::to_string(header).map_err(|e| ShardError::Write(e.to_string()))?;
    w.put(json.as_bytes())?;
    w.put(b"\n")?;
    let head_bytes = w.bytes;
    // An evaluate run counts units up, as `wearout evaluate` does.
    let sims: Vec<Simulator<'_>> = policies
        .iter()
        .map(|p| match header.kind {
            RunKind::Evaluate => Simulator::new(model, p).counting_units_up(),
            RunKind::FrontierValidation => Simulator::new(model, p),
        })
        .collect();
    let mut outcomes: Vec<Vec<TrialOutcome>> = vec![Vec::new(); policies.len()];
    let mut buf: Vec<u8> = Vec::new();
    let mut records = 0u64;
    let mut t = header.first;
    while t < header.end {
        let e = t.saturating_add(BLOCK).min(header.end);
        for (sim, v) in sims.iter().zip(outcomes.iter_mut()) {
            v.clear();
            if !for_each_trial(sim, t..e, progress, |_, o| v.push(o.clone())) {
                return Err(ShardError::Interrupted);
            }
        }
        buf.clear();
        for i in 0..(e - t) as usize {
            for v in &outcomes {
                codec.encode(&v[i], &mut buf);
                records += 1;
            }
        }
        w.put(&buf)?;
        t = e;
    }
    if progress.cancelled() {
        return Err(ShardError::Interrupted);
    }
    let record_bytes = w.bytes - head_bytes;
    let seconds = start.elapsed().as_secs_f64();
    w.put(TRAILER_MAGIC)?;
    w.put(&records.to_le_bytes())?;
    w.put(&seconds.to_le_bytes())?;
    let digest = w.hash.clone().finalize();
    w.inner
        .write_all(&digest)
        .and_then(|()| w.inner.flush())
        .map_err(|e| ShardError::Write(e.to_string()))?;
    Ok(Written {
        records,
        bytes: w.bytes + 32,
        record_bytes,
        seconds,
    })
}

/// A shard file whose header and checksum have been read and checked.
#[derive(Debug, Clone, PartialEq)]
pub struct ShardInfo {
    /// The name it is reported under.
    pub file: String,
    pub header: ShardHeader,
    /// Seconds the shard's run took (from its trailer).
    pub seconds: f64,
    /// Where the records start.
    body_offset: u64,
    /// Where the trailer starts.
    body_end: u64,
}

/// Read and check a shard file's header and trailer, and its checksum over
/// the whole file (so a damaged or truncated file is refused before any
/// record is decoded).
///
/// # Errors
/// When the file is not a shard, is of another format version, is
/// truncated or damaged, or cannot be read.
pub fn open<R: Read + Seek>(file: &str, r: &mut R) -> Result<ShardInfo, ShardError> {
    let io = |e: std::io::Error| ShardError::Read {
        file: file.to_string(),
        why: e.to_string(),
    };
    let damaged = |why: String| ShardError::Damaged {
        file: file.to_string(),
        why,
    };
    let len = r.seek(SeekFrom::End(0)).map_err(io)?;
    r.seek(SeekFrom::Start(0)).map_err(io)?;
    let mut br = BufReader::new(&mut *r);
    let mut magic = Vec::new();
    (&mut br)
        .take(64)
        .read_until(b'\n', &mut magic)
        .map_err(io)?;
    let want = format!("{MAGIC} {FORMAT_VERSION}\n");
    if magic != want.as_bytes() {
        let text = String::from_utf8_lossy(&magic);
        if magic.last() != Some(&b'\n') && want.as_bytes().starts_with(&magic) && !magic.is_empty()
        {
            return Err(damaged("it ends inside its first line".into()));
        }
        if let Some(v) = text.strip_prefix(&format!("{MAGIC} ")) {
            let v = v.trim();
            if !v.is_empty() && v.chars().all(|c| c.is_ascii_digit()) {
                return Err(ShardError::Format {
                    file: file.to_string(),
                    found: v.to_string(),
                });
            }
        }
        return Err(ShardError::NotAShard {
            file: file.to_string(),
            why: format!("it does not start with `{MAGIC} {FORMAT_VERSION}`"),
        });
    }
    let mut line = Vec::new();
    (&mut br)
        .take(MAX_HEADER)
        .read_until(b'\n', &mut line)
        .map_err(io)?;
    if line.last() != Some(&b'\n') {
        return Err(damaged("its header line is cut short".into()));
    }
    let header: ShardHeader = serde_json::from_slice(&line[..line.len() - 1])
        .map_err(|e| damaged(format!("its header is not readable: {e}")))?;
    drop(br);
    header.check(file)?;
    let body_offset = (magic.len() + line.len()) as u64;
    if len < body_offset + TRAILER_LEN {
        return Err(damaged(
            "it has no trailer: it was cut short, perhaps by a stopped run".into(),
        ));
    }
    let body_end = len - TRAILER_LEN;
    let mut trailer = [0u8; TRAILER_LEN as usize];
    r.seek(SeekFrom::Start(body_end)).map_err(io)?;
    r.read_exact(&mut trailer).map_err(io)?;
    if &trailer[..8] != TRAILER_MAGIC {
        return Err(damaged(
            "it has no trailer: it was cut short, perhaps by a stopped run".into(),
        ));
    }
    let mut u = [0u8; 8];
    u.copy_from_slice(&trailer[8..16]);
    let records = u64::from_le_bytes(u);
    u.copy_from_slice(&trailer[16..24]);
    let seconds = f64::from_le_bytes(u);
    // The checksum of everything before it.
    r.seek(SeekFrom::Start(0)).map_err(io)?;
    let mut hash = Sha256::new();
    let mut left = len - 32;
    let mut buf = vec![0u8; 1 << 16];
    while left > 0 {
        let n = left.min(buf.len() as u64) as usize;
        r.read_exact(&mut buf[..n]).map_err(io)?;
        hash.update(&buf[..n]);
        left -= n as u64;
    }
    if hash.finalize().as_slice() != &trailer[24..] {
        return Err(damaged("its checksum does not match its contents".into()));
    }
    if u128::from(records) != header.records() {
        return Err(damaged(format!(
            "it holds {records} records where its header calls for {}",
            header.records()
        )));
    }
    Ok(ShardInfo {
        file: file.to_string(),
        header,
        seconds,
        body_offset,
        body_end,
    })
}

/// Decode the records of an opened shard in trial order, calling `each`
/// with (policy index, trial index, outcome).
///
/// # Errors
/// When the file cannot be read or its records do not decode to exactly
/// the trials its header names.
pub fn read_outcomes<R: Read + Seek>(
    info: &ShardInfo,
    r: &mut R,
    mut each: impl FnMut(usize, u64, &TrialOutcome),
) -> Result<(), ShardError> {
    let damaged = |why: String| ShardError::Damaged {
        file: info.file.clone(),
        why,
    };
    let codec = Codec::from_record(&info.header.codec)
        .ok_or_else(|| damaged("its header's constants are unreadable".into()))?;
    r.seek(SeekFrom::Start(info.body_offset))
        .map_err(|e| ShardError::Read {
            file: info.file.clone(),
            why: e.to_string(),
        })?;
    let mut br = Bytes {
        inner: BufReader::with_capacity(1 << 16, r),
        read: 0,
    };
    let n_pol = info.header.policies.len();
    for t in info.header.range() {
        for p in 0..n_pol {
            let o = codec
                .decode(&mut br)
                .map_err(|e| damaged(format!("record of trial {t}: {e}")))?;
            each(p, t, &o);
        }
    }
    if info.body_offset + br.read != info.body_end {
        return Err(damaged(
            "its records do not end where its trailer starts".into(),
        ));
    }
    Ok(())
}
