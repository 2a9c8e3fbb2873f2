//! Trial streams: every random number the engine uses.
//!
//! Owns: the map from (scenario seed, trial index, stream key) to a sequence
//! of random numbers. A stream is a pure function of those three values, so
//! every policy sees the same futures, and a trial's outcome does not depend
//! on thread count, batch size or the process that ran it.
//! May use: nothing but `rand`'s traits.
//!
//! The generator is counter-based: the `k`-th 64-bit word of a stream is the
//! SplitMix64 finaliser (Steele, Lea & Flood, "Fast splittable pseudorandom
//! number generators", OOPSLA 2014) applied to `base + k * golden`, where
//! `base` hashes the seed, the trial index and the key. Random access to any
//! draw is therefore free, and no state is shared between streams.

use std::convert::Infallible;

/// Which stream of a trial a draw comes from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum StreamKey {
    /// Initial ages of the whole fleet.
    InitialAges,
    /// Lives of the parts fitted to one position of one unit (draw 0 is the
    /// initial part's remaining life, draw `k` the `k`-th replacement's).
    Lives { unit: u32, position: u32 },
    /// Lead times of one part type's orders (draw `k` for its `k`-th order).
    LeadTimes { part: u32 },
    /// Per-trial draws of uncertain life parameters of one part type.
    Parameters { part: u32 },
    /// Repair times of one repairable part type (draw `k` for the `k`-th
    /// part sent to its repair shop).
    RepairTimes { part: u32 },
    /// Condemnation draws of one repairable part type (draw `k`, a
    /// uniform, for its `k`-th removal).
    Condemn { part: u32 },
    /// Transport times from the depot to one site (draw `k` for its `k`-th
    /// shipment).
    Transport { site: u32 },
    /// Lateral transfer times (draw `k` for the `k`-th transfer).
    Lateral,
}

impl StreamKey {
    fn code(self) -> u64 {
        match self {
            StreamKey::InitialAges => 1,
            StreamKey::Lives { unit, position } => {
                (2 << 60) | ((unit as u64) << 24) | position as u64
            }
            StreamKey::LeadTimes { part } => (3 << 60) | part as u64,
            StreamKey::Parameters { part } => (4 << 60) | part as u64,
            StreamKey::RepairTimes { part } => (5 << 60) | part as u64,
            StreamKey::Condemn { part } => (6 << 60) | part as u64,
            StreamKey::Transport { site } => (7 << 60) | site as u64,
            StreamKey::Lateral => 8 << 60,
        }
    }
}

const GOLDEN: u64 = 0x9E37_79B9_7F4A_7C15;

/// The SplitMix64 output function: a bijective 64-bit mixer.
#[inline]
fn mix(mut z: u64) -> u64 {
    z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
    z ^ (z >> 31)
}

/// One trial's source of streams.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct TrialSeed {
    base: u64,
}

impl TrialSeed {
    /// The streams of trial `trial` of a scenario with seed `seed`.
    pub fn new(seed: u64, trial: u64) -> Self {
        let base = mix(mix(seed ^ 0x0005_EED0_FFEE) ^ trial.wrapping_mul(GOLDEN));
        TrialSeed { base }
    }

    /// The stream named by `key`, positioned at its first draw.
    pub fn stream(&self, key: StreamKey) -> Stream {
        Stream {
            base: mix(self.base ^ mix(key.code().wrapping_add(GOLDEN))),
            counter: 0,
        }
    }
}

/// A sequence of random 64-bit words; implements `rand`'s `Rng`.
#[derive(Debug, Clone)]
pub struct Stream {
    base: u64,
    counter: u64,
}

impl Stream {
    /// How many 64-bit words have been drawn so far.
    pub fn position(&self) -> u64 {
        self.counter
    }

    #[inline]
    fn next_word(&mut self) -> u64 {
        let w = mix(self.base.wrapping_add(self.counter.wrapping_mul(GOLDEN)));
        self.counter += 1;
        w
    }
}

impl rand::TryRng for Stream {
    type Error = Infallible;

    #[inline]
    fn try_next_u32(&mut self) -> Result<u32, Infallible> {
        Ok((self.next_word() >> 32) as u32)
    }

    #[inline]
    fn try_next_u64(&mut self) -> Result<u64, Infallible> {
        Ok(self.next_word())
    }

    fn try_fill_bytes(&mut self, dst: &mut [u8]) -> Result<(), Infallible> {
        for chunk in dst.chunks_mut(8) {
            let w = self.next_word().to_le_bytes();
            chunk.copy_from_slice(&w[..chunk.len()]);
        }
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use rand::Rng;

    #[test]
    fn streams_are_pure_functions_of_their_keys() {
        let a = TrialSeed::new(7, 12).stream(StreamKey::Lives {
            unit: 3,
            position: 1,
        });
        let b = TrialSeed::new(7, 12).stream(StreamKey::Lives {
            unit: 3,
            position: 1,
        });
        let (mut a, mut b) = (a, b);
        for _ in 0..10 {
            assert_eq!(a.next_u64(), b.next_u64());
        }
    }

    #[test]
    fn different_keys_differ() {
        let t = TrialSeed::new(7, 12);
        let mut s1 = t.stream(StreamKey::Lives {
            unit: 0,
            position: 1,
        });
        let mut s2 = t.stream(StreamKey::Lives {
            unit: 1,
            position: 0,
        });
        let mut s3 = TrialSeed::new(7, 13).stream(StreamKey::Lives {
            unit: 0,
            position: 1,
        });
        let (x1, x2, x3) = (s1.next_u64(), s2.next_u64(), s3.next_u64());
        assert_ne!(x1, x2);
        assert_ne!(x1, x3);
    }

    #[test]
    fn uniform_moments() {
        // Mean 1/2 and variance 1/12 of U(0,1): textbook; tolerance 5 standard errors.
        let mut s = TrialSeed::new(1, 0).stream(StreamKey::InitialAges);
        let n = 200_000;
        let xs: Vec<f64> = (0..n).map(|_| crate::dist::open_uniform(&mut s)).collect();
        let mean = xs.iter().sum::<f64>() / n as f64;
        let var = xs.iter().map(|x| (x - mean).powi(2)).sum::<f64>() / n as f64;
        assert!((mean - 0.5).abs() < 5.0 * (1.0f64 / 12.0 / n as f64).sqrt());
        assert!((var - 1.0 / 12.0).abs() < 5.0 * (1.0f64 / 180.0 / n as f64).sqrt());
    }
}
