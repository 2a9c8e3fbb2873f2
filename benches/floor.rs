//! How cheap can an engine of this event structure be? (`cargo bench --bench floor`)
//!
//! A throwaway skeleton of the event loop for benchmark fleet B1, kept only
//! to measure a floor under the engine's cost: the same kinds of events as
//! `wearout::sim` (failures and dues, one order per demand, FIFO waiting
//! for spares, awaited arrivals, uninterruptible work finished within its
//! demand's event) and the same kinds of draws from the same streams, but
//! no books at all: no costs, no down-time causes, no stock area, no
//! separate queue for planned work (a planned demand that finds no spare
//! holds its unit down, so the skeleton's availability is lower than the
//! engine's), unplanned durations throughout, no hard limits. Its events go
//! in the engine's exact order: the same tournament keys (`time bits << 64
//! | class << 32 | unit`) and the same per-position reading keys. It is not
//! a model of anything and no result of the project comes from it.
//!
//! It runs every trial once drawing its random numbers and recording them,
//! then times two passes over the same trials: the skeleton replaying the
//! recorded numbers from memory (its own work), and the same numbers drawn
//! again from the same streams with nothing else (the draws' work). The
//! replay reads its numbers from memory, so its wall time is an upper
//! bound; instruction counts are sharper:
//!
//! ```text
//! valgrind --tool=callgrind --toggle-collect='floor::replay_all' target/release/deps/floor-* 200
//! valgrind --tool=callgrind --toggle-collect='floor::draw_all' target/release/deps/floor-* 200
//! ```

use std::time::Instant;

use wearout::dist::{LeadTime, Life};
use wearout::model::{Model, Rule};
use wearout::stream::{Stream, StreamKey, TrialSeed};

/// B1's shape: trucks, positions per truck, part types.
const NU: usize = 40;
const NPOS: usize = 8;
const NP: usize = 6;
const NIDX: usize = NU * NPOS;
const LEAVES: usize = 64;
/// Room for the orders on their way and the waiting demands of one part type.
const ROOM: usize = 128;

/// Where the skeleton's numbers come from (one skeleton is compiled for
/// each, so the replay pays nothing for the drawing).
trait Numbers {
    fn ages(&self) -> [f64; NIDX];
    fn life(&mut self, f: &Fleet, idx: usize, age: f64) -> f64;
    fn lead(&mut self, f: &Fleet, p: usize) -> f64;
}

/// Drawn from the trial's streams, and recorded.
struct Drawing<'a> {
    lives: Vec<Stream>,
    leads: Vec<Stream>,
    rec: &'a mut Rec,
}

impl Numbers for Drawing<'_> {
    fn ages(&self) -> [f64; NIDX] {
        self.rec.age
    }
    fn life(&mut self, f: &Fleet, idx: usize, age: f64) -> f64 {
        let x = f.life[f.part[idx] as usize].sample_residual(age, &mut self.lives[idx]);
        self.rec.lives[idx].push(x);
        x
    }
    fn lead(&mut self, f: &Fleet, p: usize) -> f64 {
        let x = f.lead[p].sample(&mut self.leads[p]);
        self.rec.leads[p].push(x);
        x
    }
}

/// Read back from a record, in order.
struct Replaying<'a> {
    rec: &'a Rec,
    at_life: [usize; NIDX],
    at_lead: [usize; NP],
}

impl Numbers for Replaying<'_> {
    fn ages(&self) -> [f64; NIDX] {
        self.rec.age
    }
    #[inline]
    fn life(&mut self, _: &Fleet, idx: usize, _: f64) -> f64 {
        let x = self.rec.lives[idx][self.at_life[idx]];
        self.at_life[idx] += 1;
        x
    }
    #[inline]
    fn lead(&mut self, _: &Fleet, p: usize) -> f64 {
        let x = self.rec.leads[p][self.at_lead[p]];
        self.at_lead[p] += 1;
        x
    }
}

/// One trial's initial ages, and every number it drew, in order.
struct Rec {
    age: [f64; NIDX],
    lives: Vec<Vec<f64>>,
    leads: Vec<Vec<f64>>,
}

/// What the skeleton needs of the model and the policy.
struct Fleet {
    part: [u8; NIDX],
    life: [Life; NP],
    lead: [LeadTime; NP],
    duration: [f64; NP],
    interval: [f64; NP],
    stock: [u32; NP],
    horizon: f64,
}

struct Skeleton<'a, N: Numbers> {
    f: &'a Fleet,
    node: [u128; 2 * LEAVES],
    /// Per position, its next event as the engine keys it: the unit-clock
    /// reading of its failure or its due, whichever is first, `bits << 1 |
    /// is_due` (a failure first at the same reading).
    next: [u64; NIDX],
    op: [f64; NU],
    last: [f64; NU],
    down: [bool; NU],
    next_j: [u8; NU],
    on_hand: [u32; NP],
    /// Arrival times of orders on their way, latest first.
    pending: [[f64; ROOM]; NP],
    n_pending: [usize; NP],
    /// Waiting demands (position indices), a ring.
    queue: [[u16; ROOM]; NP],
    head: [usize; NP],
    tail: [usize; NP],
    awaited: [f64; NP],
    first: (f64, usize),
    src: N,
}

impl<'a, N: Numbers> Skeleton<'a, N> {
    fn new(f: &'a Fleet, src: N) -> Self {
        Skeleton {
            f,
            node: [u128::MAX; 2 * LEAVES],
            next: [0; NIDX],
            op: [0.0; NU],
            last: [0.0; NU],
            down: [false; NU],
            next_j: [0; NU],
            on_hand: f.stock,
            pending: [[0.0; ROOM]; NP],
            n_pending: [0; NP],
            queue: [[0; ROOM]; NP],
            head: [0; NP],
            tail: [0; NP],
            awaited: [f64::INFINITY; NP],
            first: (f64::INFINITY, 0),
            src,
        }
    }

    /// The unit's next event in the tournament, keyed exactly as the
    /// engine keys it: `time bits << 64 | class << 32 | unit`.
    fn set(&mut self, u: usize, t: f64, class: u64) {
        let mut cur = if t < self.f.horizon {
            ((t.to_bits() as u128) << 64) | ((class as u128) << 32) | u as u128
        } else {
            u128::MAX
        };
        let mut i = LEAVES + u;
        self.node[i] = cur;
        while i > 1 {
            let s = self.node[i ^ 1];
            i /= 2;
            cur = cur.min(s);
            self.node[i] = cur;
        }
    }

    fn life(&mut self, idx: usize, age: f64) -> f64 {
        self.src.life(self.f, idx, age)
    }

    fn lead(&mut self, p: usize) -> f64 {
        self.src.lead(self.f, p)
    }

    fn schedule(&mut self, u: usize, now: f64) {
        let mut best = u64::MAX;
        let mut best_j = 0;
        for j in 0..NPOS {
            let k = self.next[u * NPOS + j];
            if k < best {
                best = k;
                best_j = j;
            }
        }
        self.next_j[u] = best_j as u8;
        let reading = f64::from_bits(best >> 1);
        self.set(u, now + (reading - self.op[u]), 2 + (best & 1));
    }

    fn set_awaited(&mut self, p: usize) {
        let t = if self.head[p] != self.tail[p] && self.n_pending[p] > 0 {
            self.pending[p][self.n_pending[p] - 1]
        } else {
            f64::INFINITY
        };
        self.awaited[p] = t;
        if t < self.first.0 {
            self.first = (t, p);
        } else if p == self.first.1 {
            let mut b = (f64::INFINITY, 0);
            for (q, &x) in self.awaited.iter().enumerate() {
                if x < b.0 {
                    b = (x, q);
                }
            }
            self.first = b;
        }
    }

    /// Fit a new part at position `idx` of unit `u` at `t`.
    fn fit(&mut self, u: usize, idx: usize, t: f64) {
        let op = self.op[u];
        let x = self.life(idx, 0.0);
        self.last[u] = t;
        self.down[u] = false;
        let interval = self.f.interval[self.f.part[idx] as usize];
        self.next[idx] = reading_key(op + x, op + interval);
        self.schedule(u, t);
    }

    /// Run the trial; returns the fleet's up hours.
    fn run(&mut self) -> f64 {
        for (idx, age) in self.src.ages().into_iter().enumerate() {
            let x = self.life(idx, age);
            let due = (self.f.interval[self.f.part[idx] as usize] - age).max(0.0);
            self.next[idx] = reading_key(x, due);
        }
        for u in 0..NU {
            self.schedule(u, 0.0);
        }
        loop {
            let k = self.node[1];
            let tu = if k == u128::MAX {
                f64::INFINITY
            } else {
                f64::from_bits((k >> 64) as u64)
            };
            let (ta, p) = self.first;
            if ta < tu {
                // An awaited arrival serves the first waiting demand.
                self.n_pending[p] -= 1;
                let idx = self.queue[p][self.head[p] % ROOM] as usize;
                self.head[p] += 1;
                self.set_awaited(p);
                self.fit(idx / NPOS, idx, ta + self.f.duration[p]);
                continue;
            }
            if !tu.is_finite() {
                break;
            }
            let u = (k & 0xFFFF_FFFF) as usize;
            let idx = u * NPOS + self.next_j[u] as usize;
            let p = self.f.part[idx] as usize;
            self.op[u] = f64::from_bits(self.next[idx] >> 1);
            self.last[u] = tu;
            if self.head[p] == self.tail[p] {
                while self.n_pending[p] > 0 && self.pending[p][self.n_pending[p] - 1] <= tu {
                    self.n_pending[p] -= 1;
                    self.on_hand[p] += 1;
                }
            }
            let at = tu + self.lead(p);
            if at < self.f.horizon {
                let n = self.n_pending[p];
                let mut i = n;
                while i > 0 && self.pending[p][i - 1] <= at {
                    self.pending[p][i] = self.pending[p][i - 1];
                    i -= 1;
                }
                self.pending[p][i] = at;
                self.n_pending[p] = n + 1;
            }
            if self.on_hand[p] > 0 {
                self.on_hand[p] -= 1;
                self.fit(u, idx, tu + self.f.duration[p]);
            } else {
                self.queue[p][self.tail[p] % ROOM] = idx as u16;
                self.tail[p] += 1;
                self.down[u] = true;
                self.set(u, f64::INFINITY, 0);
                self.set_awaited(p);
            }
        }
        let mut up = 0.0;
        for u in 0..NU {
            up += self.op[u];
            if !self.down[u] && self.last[u] < self.f.horizon {
                up += self.f.horizon - self.last[u];
            }
        }
        up
    }
}

/// A position's next event as one sortable integer: a copy of the
/// engine's (private) `reading_key`, so that the skeleton's scan is the
/// engine's.
fn reading_key(fail: f64, due: f64) -> u64 {
    let f = (fail + 0.0).to_bits() << 1;
    let d = ((due + 0.0).to_bits() << 1) | 1;
    f.min(d)
}

fn fleet(model: &Model) -> Fleet {
    assert_eq!(
        (model.units.len(), model.parts.len()),
        (NU, NP),
        "the skeleton is built for B1"
    );
    let policy = model
        .policy("reference")
        .expect("B1 names its reference policy");
    let mut part = [0u8; NIDX];
    for (u, unit) in model.units.iter().enumerate() {
        assert_eq!(unit.parts.len(), NPOS, "the skeleton is built for B1");
        for (j, &p) in unit.parts.iter().enumerate() {
            part[u * NPOS + j] = p as u8;
        }
    }
    Fleet {
        part,
        life: std::array::from_fn(|p| model.parts[p].life),
        lead: std::array::from_fn(|p| model.parts[p].lead_time),
        duration: std::array::from_fn(|p| model.parts[p].duration_unplanned),
        interval: std::array::from_fn(|p| match policy.parts[p].rule {
            Rule::Age(t) => t,
            _ => f64::INFINITY,
        }),
        stock: std::array::from_fn(|p| policy.parts[p].stock.site(0)),
        horizon: model.horizon,
    }
}

/// Run trial `trial` drawing its numbers, and record them.
fn record(model: &Model, f: &Fleet, trial: u64) -> (Rec, f64) {
    let seed = TrialSeed::new(model.seed, trial);
    let mut ages = seed.stream(StreamKey::InitialAges);
    let mut rec = Rec {
        age: [0.0; NIDX],
        lives: vec![Vec::new(); NIDX],
        leads: vec![Vec::new(); NP],
    };
    let mut lives = Vec::with_capacity(NIDX);
    for idx in 0..NIDX {
        let p = f.part[idx] as usize;
        rec.age[idx] =
            wearout::dist::open_uniform(&mut ages) * model.parts[p].life.characteristic_life();
        lives.push(seed.stream(StreamKey::Lives {
            unit: (idx / NPOS) as u32,
            position: (idx % NPOS) as u32,
        }));
    }
    let leads = (0..NP)
        .map(|p| seed.stream(StreamKey::LeadTimes { part: p as u32 }))
        .collect();
    let up = Skeleton::new(
        f,
        Drawing {
            lives,
            leads,
            rec: &mut rec,
        },
    )
    .run();
    (rec, up)
}

/// The skeleton's own work: every recorded trial again, its numbers read
/// back from the record.
#[inline(never)]
fn replay_all(f: &Fleet, recs: &[Rec]) -> f64 {
    recs.iter()
        .map(|rec| {
            let numbers = Replaying {
                rec,
                at_life: [0; NIDX],
                at_lead: [0; NP],
            };
            Skeleton::new(f, numbers).run()
        })
        .sum()
}

/// The draws' work: the same numbers drawn again from the same streams,
/// and nothing else.
#[inline(never)]
fn draw_all(model: &Model, f: &Fleet, recs: &[Rec]) -> f64 {
    let mut sum = 0.0;
    for (trial, rec) in recs.iter().enumerate() {
        let seed = TrialSeed::new(model.seed, trial as u64);
        let mut ages = seed.stream(StreamKey::InitialAges);
        for (idx, drawn) in rec.lives.iter().enumerate() {
            sum += wearout::dist::open_uniform(&mut ages);
            let life = &f.life[f.part[idx] as usize];
            let mut s = seed.stream(StreamKey::Lives {
                unit: (idx / NPOS) as u32,
                position: (idx % NPOS) as u32,
            });
            for k in 0..drawn.len() {
                let age = if k == 0 { rec.age[idx] } else { 0.0 };
                sum += life.sample_residual(age, &mut s);
            }
        }
        for (p, drawn) in rec.leads.iter().enumerate() {
            let mut s = seed.stream(StreamKey::LeadTimes { part: p as u32 });
            for _ in 0..drawn.len() {
                sum += f.lead[p].sample(&mut s);
            }
        }
    }
    sum
}

fn main() {
    let trials: u64 = std::env::args()
        .skip(1)
        .find_map(|a| a.parse().ok())
        .unwrap_or(5_000);
    let path = concat!(env!("CARGO_MANIFEST_DIR"), "/scenarios/b1.toml");
    let model = wearout::scenario::load(std::path::Path::new(path)).expect("B1 loads");
    let f = fleet(&model);
    let (recs, ups): (Vec<Rec>, Vec<f64>) = (0..trials).map(|t| record(&model, &f, t)).unzip();
    let draws: usize = recs
        .iter()
        .map(|r| r.lives.iter().chain(&r.leads).map(Vec::len).sum::<usize>())
        .sum();
    let unit_hours = trials as f64 * NU as f64 * f.horizon;
    println!(
        "skeleton of B1, {trials} trials, one thread: {:.0} draws per trial, availability {:.4} (not the engine's: see the bench's doc)",
        draws as f64 / trials as f64,
        ups.iter().sum::<f64>() / unit_hours
    );
    let mut own = Vec::new();
    let mut bare = Vec::new();
    for _ in 0..3 {
        let t = Instant::now();
        let up = replay_all(&f, &recs);
        own.push(t.elapsed().as_secs_f64());
        assert_eq!(up, ups.iter().sum::<f64>(), "the replay repeats the run");
        let t = Instant::now();
        std::hint::black_box(draw_all(&model, &f, &recs));
        bare.push(t.elapsed().as_secs_f64());
    }
    own.sort_by(f64::total_cmp);
    bare.sort_by(f64::total_cmp);
    let (own, bare) = (own[1], bare[1]);
    println!("skeleton's own work (numbers read back): {own:.3} s (median of three)");
    println!("drawing the same numbers alone:          {bare:.3} s (median of three)");
    println!(
        "skeleton / random numbers: {:.2} (an upper bound: the replay reads its numbers from memory)",
        (own + bare) / bare
    );
}
