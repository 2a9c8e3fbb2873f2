//! Event simulation of one trial: the whole fleet over `[0, H]`.
//!
//! Owns: the event loop, the unit and position states, the shared stores and
//! the per-trial bookkeeping of down time, counts and costs, following the
//! rules and conventions of the reference model (see
//! docs/scenario-format.md, "How the simulation reads these fields").
//! May use: `model`, `dist`, `stream`, `outcome`. Does no
//! I/O, cannot fail, and takes all its randomness from the trial's streams.
//!
//! With [`Model::parameter_uncertainty`] on, each trial first draws the life
//! of every part type that carries a [`PartType::life_uncertainty`] from the
//! trial's `Parameters { part }` stream (a pure function of seed, trial and
//! part, so every policy meets the same lives), then runs as usual.
//!
//! [`PartType::life_uncertainty`]: crate::model::PartType::life_uncertainty
//!
//! What the replacement rules decide is asked of [`Rule`] (when is a part
//! due?); the loop itself only moves clocks, parts and spares.
//!
//! Two shortcuts keep the events near one per renewal, and change no
//! result ([`Simulator::with_all_events`] turns them off for tests): a
//! replacement that nothing can interrupt is finished within its demand's
//! event, and an arrival nobody waits for is booked when its store is next
//! used.
//!
//! Sites, a depot, lateral supply and rotables (MODEL.md, "Second part")
//! add stores and flows, each drawn from its own keyed stream: one store per
//! site and part type and one per part type at the depot, requests to the
//! depot and its shipments, a repair shop per repairable part type (whose
//! completion is fixed when a part enters it, so it needs no events), and
//! lateral transfers bound to the failure they serve. A scenario without
//! them has one store per part type, indexed by part, and runs exactly the
//! first part's arithmetic: the extra flows are behind per-simulator
//! switches. The moments units go down and come up are logged when the
//! trial counts units up (`ready`).

mod ready;

use std::collections::VecDeque;

use crate::dist::{Hours, Life};
use crate::model::{InitialAge, Model, PartPolicy, Policy, Rule};
use crate::outcome::{SiteOutcome, TrialOutcome};
use crate::stream::{Stream, StreamKey, TrialSeed};
use ready::Change;

/// Event classes in the order they are handled at the same instant
/// (MODEL.md, "Same instant, extended"). Arrivals at stores (classes 1 and
/// 3) are kept apart, in [`Arrivals`]; the others are unit events.
const CLASS_COMPLETION: u64 = 0;
/// Arrivals at the depot (repairs ending, purchases); it ships at once.
const CLASS_DEPOT: u64 = 1;
/// A lateral transfer reaching the failed unit it serves.
const CLASS_LATERAL: u64 = 2;
/// Arrivals at sites: depot shipments, or without a depot the site's own
/// repairs and purchases.
const CLASS_SITE: u64 = 3;
const CLASS_FAILURE: u64 = 4;
const CLASS_DUE: u64 = 5;

/// Lead times drawn at a time per part type (the last batch of a trial is
/// partly unused: at most `LEAD_BATCH - 1` spare draws per part type).
const LEAD_BATCH: usize = 8;

/// Down-time causes in priority order (lower wins when causes overlap).
const CAUSE_WAITING: u8 = 0;
const CAUSE_UNPLANNED: u8 = 1;
const CAUSE_PLANNED: u8 = 2;
const CAUSE_NONE: u8 = 3;

/// A tournament tree over the units' next own events (while up: failure,
/// due or hard limit; while down: the earliest end of a replacement under
/// way). The earliest is at the root, and changing one unit's event costs
/// `log2(units)` comparisons with no stale entries. A node holds the
/// winner's key `time bits << 64 | class << 32 | unit`, so ties go to the
/// lower class, then to the lower unit (times are never negative, so their
/// bit patterns sort as numbers). Awaited spare arrivals are kept apart, in
/// [`Arrivals`].
#[derive(Debug, Default)]
struct Tourney {
    /// Number of leaves (a power of two); node `n + i` is leaf `i`.
    n: usize,
    node: Vec<u128>,
}

#[inline]
fn tourney_key(time: Hours, class: u64, unit: usize) -> u128 {
    ((time.to_bits() as u128) << 64) | ((class as u128) << 32) | unit as u128
}

impl Tourney {
    fn reset(&mut self, leaves: usize) {
        self.n = leaves.max(1).next_power_of_two();
        self.node.clear();
        self.node.resize(2 * self.n, u128::MAX);
        for i in 0..leaves {
            self.node[self.n + i] = tourney_key(f64::INFINITY, CLASS_DUE, i);
        }
        for i in (1..self.n).rev() {
            self.node[i] = self.node[2 * i].min(self.node[2 * i + 1]);
        }
    }

    #[inline]
    fn set(&mut self, leaf: usize, time: Hours, class: u64) {
        // The length is a power of two, so masking keeps every index in
        // bounds without a check per level.
        let node = &mut self.node[..];
        let mask = node.len() - 1;
        let mut i = self.n + leaf;
        let mut cur = tourney_key(time, class, leaf);
        node[i & mask] = cur;
        while i > 1 {
            let sibling = node[(i ^ 1) & mask];
            i /= 2;
            cur = if sibling < cur { sibling } else { cur };
            node[i & mask] = cur;
        }
    }

    /// The earliest unit event: (time, class, unit).
    #[inline]
    fn top(&self) -> (Hours, u64, usize) {
        // Node 1 is the root (or the only leaf when there is one unit).
        let k = self.node[1];
        (
            f64::from_bits((k >> 64) as u64),
            ((k >> 32) & 0xFFFF_FFFF) as u64,
            (k & 0xFFFF_FFFF) as usize,
        )
    }
}

/// The next awaited spare arrival of each store (infinite while no demand
/// for it waits), and the earliest of them. Stores are numbered in their
/// same-instant order (the depot's before the sites', a site's in part-type
/// order), so ties go to the lower index; without sites or depot a store
/// is its part type. Stores are few, so a change rescans them all.
#[derive(Debug, Default)]
struct Arrivals {
    at: Vec<Hours>,
    /// The earliest: (time, part); ties go to the lower part index.
    first: (Hours, usize),
}

impl Arrivals {
    fn reset(&mut self, parts: usize) {
        self.at.clear();
        self.at.resize(parts, f64::INFINITY);
        self.first = (f64::INFINITY, 0);
    }

    #[inline]
    fn set(&mut self, part: usize, time: Hours) {
        let old = self.at[part];
        self.at[part] = time;
        if time < self.first.0 || (time == self.first.0 && part < self.first.1) {
            self.first = (time, part);
        } else if part == self.first.1 && time != old {
            let mut best = (f64::INFINITY, 0);
            for (p, &t) in self.at.iter().enumerate() {
                if t < best.0 {
                    best = (t, p);
                }
            }
            self.first = best;
        }
    }
}

/// The least reading key among a unit's positions and its position (the
/// lower position at equal keys).
#[inline(always)]
fn least_key(keys: &[u64]) -> (u64, usize) {
    let mut best = u64::MAX;
    let mut best_j = 0;
    for (j, &k) in keys.iter().enumerate() {
        if k < best {
            best = k;
            best_j = j;
        }
    }
    (best, best_j)
}

/// A position's next own event as one sortable integer: the earlier of
/// its failure reading `fail` and its due reading `due`, a failure first
/// at the same reading. A non-negative `f64`'s bits sort as the number and
/// leave the sign bit free, so `bits << 1 | is_due` orders by reading, then
/// failures before dues.
#[inline]
fn reading_key(fail: Hours, due: Hours) -> u64 {
    // `+ 0.0` turns a negative zero into zero (readings are never negative).
    let f = (fail + 0.0).to_bits() << 1;
    let d = ((due + 0.0).to_bits() << 1) | 1;
    f.min(d)
}

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Status {
    /// Fitted and working.
    Working,
    /// Fell due for a planned replacement, no spare yet; still working.
    WaitingPlanned,
    /// Failed, waiting for a spare.
    Failed,
    /// Safety-critical part at its hard limit, waiting for a spare: the unit
    /// is held down.
    Grounded,
    /// Being replaced (planned or not).
    Replacing { planned: bool },
    /// Failed, a spare on its way from another site (lateral transfer).
    Transfer,
}

#[derive(Debug, Clone)]
struct Pos {
    part: usize,
    status: Status,
    /// Unit operating-hour reading at which the fitted part fails.
    fail_op: Hours,
    /// Reading at which it falls due for planned replacement (infinite: never).
    due_op: Hours,
    /// Reading at which it reaches its hard life limit (infinite: none).
    limit_op: Hours,
    lives: Stream,
}

#[derive(Debug, Clone)]
struct UnitState {
    /// Operating hours at `last`.
    op: Hours,
    /// Wall time of the last bookkeeping update.
    last: Hours,
    first_pos: usize,
    n_pos: usize,
    /// Number of positions that hold the unit down.
    holding_down: u32,
    /// Sum of their indices within the unit: while one position holds it
    /// down, which one.
    held_sum: usize,
    /// Number of its positions under replacement.
    replacing: u32,
    /// Number of positions due for planned replacement and waiting for a
    /// spare (their parts still work).
    waiting_planned: u32,
    /// The unit's next own event: its position, and (while up) its reading.
    next_pos: usize,
    next_op: Hours,
    /// Its site, and its site's first store (its store of part type `p` is
    /// `store_base + p`).
    site: usize,
    store_base: usize,
    /// Number of its positions waiting for a lateral transfer.
    transfers: u32,
}

#[derive(Debug, Clone, Default)]
struct Store {
    on_hand: u32,
    /// Waiting failures (and grounded parts): (unit, position), first come first served.
    failures: VecDeque<(u32, u32)>,
    /// Waiting planned replacements.
    planned: VecDeque<(u32, u32)>,
    /// At the depot: the sites whose requests wait, first come first served.
    requests: VecDeque<u32>,
    /// Time integral of spares on hand, up to `last`.
    area: f64,
    last: Hours,
    /// With `[money]`: the discount factor at `last`; the integral of the
    /// spares on hand times `-dD(t)` (`delta` times their discounted
    /// spare-hours); the year `last` is in, its end (infinite in the last
    /// year, and without money), and the area at its start.
    disc_last: f64,
    pv_area: f64,
    year: u32,
    year_end: Hours,
    year_area0: f64,
    /// Time integral of the demands (at the depot: requests) waiting, kept
    /// as the sum of their leaving times minus their joining times (those
    /// still waiting leave at the horizon).
    back_area: f64,
    /// Arrival times of the orders on their way that arrive before the
    /// horizon, latest first, and of equal times the later order first (so
    /// the earliest order arrives first). While no demand waits, an arrival
    /// only puts a spare on the shelf, so it is booked when the store is
    /// next used (or at the horizon); while demands wait, the earliest is an
    /// event (in [`Arrivals`]). Orders here are anything on its way to
    /// the store: purchases, repaired parts, shipments from the depot.
    pending: Vec<Hours>,
    /// Orders that arrive at or after the horizon (so the orders on their
    /// way are these and `pending`).
    beyond: u64,
    /// Store `p` (the first site's, or with a depot the depot's store of
    /// part type `p`) also keeps part type `p`'s purchases, whichever store
    /// places them: unused in the others.
    supply: Supply,
}

impl Store {
    /// True while demands (or requests) wait for a spare here; only a depot
    /// store (`NET`) has requests.
    #[inline(always)]
    fn awaited<const NET: bool>(&self) -> bool {
        !(self.failures.is_empty() && self.planned.is_empty() && (!NET || self.requests.is_empty()))
    }

    /// Demands (or requests) waiting.
    fn waiting(&self) -> usize {
        self.failures.len() + self.planned.len() + self.requests.len()
    }
}

/// One part type's purchases, whichever store places them: its lead-time
/// stream (draw `k` for its `k`-th order), drawn ahead in batches.
#[derive(Debug, Clone)]
struct Supply {
    leads: Stream,
    /// Lead times drawn ahead from `leads`, in order, and the next to use.
    lead_buf: [Hours; LEAD_BATCH],
    lead_next: usize,
}

impl Default for Supply {
    /// A placeholder: every trial sets the stream of the stores that use it.
    fn default() -> Self {
        Supply {
            leads: TrialSeed::new(0, 0).stream(StreamKey::LeadTimes { part: 0 }),
            lead_buf: [0.0; LEAD_BATCH],
            lead_next: LEAD_BATCH,
        }
    }
}

/// One repairable part type's repair shop and condemnation draws.
#[derive(Debug, Clone)]
struct Shop {
    times: Stream,
    condemn: Stream,
    /// With limited channels, the time each channel is next free (empty:
    /// unlimited). A part entering starts at the earliest free time (the
    /// lowest channel on ties), so with first come first served its
    /// completion is known when it enters.
    free: Vec<Hours>,
}

/// Which part types take part in a run. Positions of an inactive part type
/// never fail and are never replaced (used to screen one part type alone).
#[derive(Debug, Clone, PartialEq)]
pub struct ActiveParts(Vec<bool>);

impl ActiveParts {
    /// Every part type active.
    pub fn all(n_parts: usize) -> Self {
        ActiveParts(vec![true; n_parts])
    }
    /// Only part type `part` active.
    pub fn only(n_parts: usize, part: usize) -> Self {
        let mut v = vec![false; n_parts];
        v[part] = true;
        ActiveParts(v)
    }
    fn is_active(&self, part: usize) -> bool {
        self.0[part]
    }
}

/// Reusable per-thread state of the event loop.
#[derive(Debug, Default)]
pub struct Workspace {
    tourney: Tourney,
    arrivals: Arrivals,
    /// Per position, derived from its status (kept by `Run::set_status`):
    /// its next own event as a [`reading_key`] (the reading at which it
    /// fails, infinite unless working, or of its next due or hard limit,
    /// whichever is first, a failure first at the same reading), and its
    /// down-time cause rank.
    key_at: Vec<u64>,
    /// Per position: wall time at which its replacement ends (infinite
    /// unless one is under way).
    done_at: Vec<Hours>,
    cause: Vec<u8>,
    units: Vec<UnitState>,
    pos: Vec<Pos>,
    stores: Vec<Store>,
    /// Per part type (empty for a consumable's shop, never used).
    shops: Vec<Shop>,
    /// Per site: the transport times from the depot.
    transport: Vec<Stream>,
    lateral: Vec<Stream>,
    /// Moments units go down and come up (when counting units up).
    changes: Vec<Change>,
    /// The trial's drawn lives per part type (parameter uncertainty).
    trial_lives: Vec<Life>,
    books: Books,
}

/// The yearly books of one trial: the last year each part type had a
/// stock-out and, with `[money]`, the spares on hand per year and their
/// discounted time integral (holding, split exactly across years).
#[derive(Debug, Default)]
struct Books {
    /// Per part type: 1 + the last year with a stock-out (0: none yet).
    stockout_year: Vec<u32>,
    /// With money: spare-hours on hand per year and part type (index
    /// `year * parts + part`).
    year_shelf: Vec<f64>,
    /// With money: per part type, the integral of the spares on hand times
    /// `exp(-delta t)` over the horizon.
    shelf_pv: Vec<f64>,
}

/// What the last trial run on a [`Workspace`] drew: the words taken from
/// each position's lives stream (in unit, then position order) and the
/// lead times of each part type's orders. For the engine bench alone, which
/// times these draws without the engine ([`Simulator::draw_only`]); read
/// from the streams' positions and the trial's order counts after the run,
/// so the event loop keeps no counter for it. Not part of the library's
/// interface.
#[doc(hidden)]
#[derive(Debug, Clone, Default, PartialEq, Eq)]
pub struct DrawCounts {
    pub life_words: Vec<u32>,
    pub leads: Vec<u32>,
}

impl Workspace {
    /// The draws of the last trial run on this workspace, whose outcome is
    /// `outcome`. For the engine bench alone.
    #[doc(hidden)]
    pub fn draw_counts(&self, outcome: &TrialOutcome) -> DrawCounts {
        DrawCounts {
            life_words: self.pos.iter().map(|p| p.lives.position() as u32).collect(),
            leads: outcome.parts.iter().map(|p| p.orders).collect(),
        }
    }
}

/// Simulates trials of one model under one policy.
#[derive(Debug, Clone)]
pub struct Simulator<'m> {
    model: &'m Model,
    policy: Vec<PartPolicy>,
    active: ActiveParts,
    /// Life per part type (the model's unless overridden per trial).
    lives: Vec<Life>,
    /// True when trials draw their own lives (parameter uncertainty on and
    /// some part type uncertain).
    draws_lives: bool,
    /// Handle every completion and every arrival as an event of its own
    /// (no shortcuts); for tests that check the shortcuts change nothing.
    all_events: bool,
    /// Per part type: true when a demand only places one purchase order to
    /// its own store (a consumable, no depot, no lateral supply): the first
    /// part's flow.
    simple: Vec<bool>,
    /// Per part type: true for a repairable part type.
    repairable: Vec<bool>,
    depot: bool,
    lateral: bool,
    /// Log the moments units go down and come up, and count units up.
    counts_up: bool,
    /// Sites, a depot, lateral supply or a repairable part type.
    net: bool,
    /// Stores at the depot (0 or the part types), before the sites' stores.
    depot_stores: usize,
    /// Units at each site.
    site_units: Vec<u32>,
    /// The hours of a year for the yearly stock-out count, and the whole
    /// years in the horizon.
    year_hours: Hours,
    whole_years: u32,
    /// With `[money]`: the years and the discount of the yearly books.
    money: Option<Clock>,
}

/// The calendar of the money books (scenarios with `[money]`).
#[derive(Debug, Clone, Copy)]
struct Clock {
    hours_per_year: Hours,
    /// Years the horizon touches (the last may be partial).
    years: usize,
    /// Continuous discount per hour, `ln(1 + r) / hours_per_year`.
    delta: f64,
}

impl Clock {
    /// The year (from 0) holding clock time `t` (the last year also holds
    /// the horizon itself).
    #[inline(always)]
    fn year(&self, t: Hours) -> usize {
        ((t / self.hours_per_year) as usize).min(self.years - 1)
    }

    /// What one unit of money at clock time `t` is worth at time 0.
    #[inline(always)]
    fn discount(&self, t: Hours) -> f64 {
        if self.delta == 0.0 {
            1.0
        } else {
            (-self.delta * t).exp()
        }
    }
}

impl<'m> Simulator<'m> {
    /// A simulator of `policy` on `model`, every part type active.
    pub fn new(model: &'m Model, policy: &Policy) -> Self {
        Self::with_parts(model, &policy.parts, ActiveParts::all(model.parts.len()))
    }

    /// A simulator with an explicit per-part policy and active set.
    pub fn with_parts(model: &'m Model, policy: &[PartPolicy], active: ActiveParts) -> Self {
        assert_eq!(policy.len(), model.parts.len(), "one entry per part type");
        assert!(
            policy.iter().all(|p| p.stock.sites() == model.sites.len()),
            "one stock level per site"
        );
        Simulator {
            model,
            policy: policy.to_vec(),
            active,
            lives: model.parts.iter().map(|p| p.life).collect(),
            draws_lives: model.parameter_uncertainty
                && model.parts.iter().any(|p| {
                    p.life_uncertainty
                        .as_ref()
                        .is_some_and(|u| u.is_uncertain())
                }),
            all_events: false,
            simple: model
                .parts
                .iter()
                .map(|p| p.repair.is_none() && model.depot.is_none() && model.lateral.is_none())
                .collect(),
            repairable: model.parts.iter().map(|p| p.repair.is_some()).collect(),
            depot: model.depot.is_some(),
            lateral: model.lateral.is_some(),
            counts_up: model.ready.is_some() || model.has_sites(),
            net: model.has_sites()
                || model.depot.is_some()
                || model.lateral.is_some()
                || model.has_rotables(),
            depot_stores: if model.depot.is_some() {
                model.parts.len()
            } else {
                0
            },
            site_units: model.site_units().iter().map(|&n| n as u32).collect(),
            year_hours: model.year_hours(),
            whole_years: model.whole_years(),
            money: model.money.as_ref().map(|m| Clock {
                hours_per_year: m.hours_per_year,
                years: m.years(model.horizon),
                delta: m.delta_per_hour(),
            }),
        }
    }

    /// The same simulator, also counting units up in every trial: the hours
    /// with exactly `m` units up, fleet-wide and per site. On by itself for
    /// a scenario with sites or a ready-units target; `wearout evaluate`
    /// asks for it on every scenario. It changes no other result.
    pub fn counting_units_up(mut self) -> Self {
        self.counts_up = true;
        self
    }

    /// The same simulator without the event loop's two shortcuts: every
    /// replacement's completion and every spare arrival becomes an event of
    /// its own. Slower, and gives the same results; tests compare the two.
    pub fn with_all_events(mut self) -> Self {
        self.all_events = true;
        self
    }

    /// True when each trial draws its own lives ([`Model::parameter_uncertainty`]
    /// on and at least one part type with a varying life uncertainty).
    pub fn draws_lives(&self) -> bool {
        self.draws_lives
    }

    /// The per-part lives trial `seed` uses, written into `out` (cleared
    /// first): the model's lives, with a fresh draw from the trial's
    /// `Parameters { part }` stream for every part type that has a
    /// [`PartType::life_uncertainty`] when [`Model::parameter_uncertainty`]
    /// is on. For callers of [`Simulator::run_seeded`] that want the same
    /// lives as [`Simulator::run`].
    ///
    /// [`PartType::life_uncertainty`]: crate::model::PartType::life_uncertainty
    pub fn trial_lives(&self, seed: &TrialSeed, out: &mut Vec<Life>) {
        out.clear();
        out.extend_from_slice(&self.lives);
        if !self.draws_lives {
            return;
        }
        for (p, part) in self.model.parts.iter().enumerate() {
            if let Some(u) = &part.life_uncertainty {
                let mut rng = seed.stream(StreamKey::Parameters { part: p as u32 });
                out[p] = u.draw(&mut rng);
            }
        }
    }

    /// Run trial `trial` and return its outcome.
    pub fn run(&self, trial: u64, ws: &mut Workspace) -> TrialOutcome {
        let seed = TrialSeed::new(self.model.seed, trial);
        if !self.draws_lives {
            return self.run_seeded(&seed, &self.lives, ws);
        }
        // The buffer is lent out of the workspace for the trial and put back,
        // so a thread allocates it once.
        let mut lives = std::mem::take(&mut ws.trial_lives);
        self.trial_lives(&seed, &mut lives);
        let out = self.run_seeded(&seed, &lives, ws);
        ws.trial_lives = lives;
        out
    }

    /// Run a trial with the given streams and per-part lives.
    pub fn run_seeded(&self, seed: &TrialSeed, lives: &[Life], ws: &mut Workspace) -> TrialOutcome {
        self.dispatch(seed, lives, ws, false)
    }

    /// Run one trial with the loop compiled for this simulator's switches,
    /// so a scenario without sites, depot, lateral supply or rotables (and
    /// not counting units up) runs the first part's loop with no test of
    /// them at all.
    fn dispatch(
        &self,
        seed: &TrialSeed,
        lives: &[Life],
        ws: &mut Workspace,
        check: bool,
    ) -> TrialOutcome {
        fn go<const NET: bool, const UP: bool>(
            sim: &Simulator<'_>,
            seed: &TrialSeed,
            lives: &[Life],
            ws: &mut Workspace,
            check: bool,
        ) -> TrialOutcome {
            let mut run = Run::<NET, UP>::start(sim, seed, lives, ws, check);
            run.event_loop();
            run.finish()
        }
        match (self.net, self.counts_up) {
            (false, false) => go::<false, false>(self, seed, lives, ws, check),
            (false, true) => go::<false, true>(self, seed, lives, ws, check),
            (true, false) => go::<true, false>(self, seed, lives, ws, check),
            (true, true) => go::<true, true>(self, seed, lives, ws, check),
        }
    }

    /// Draw the random numbers trial `trial` uses, and nothing else: the
    /// trial's lives per part type, every position's initial age, its first
    /// remaining life and later lives until its stream has given
    /// `counts.life_words` words, and each part type's `counts.leads` lead
    /// times, from the same streams as [`Simulator::run`]. Returns their
    /// sum, so that the work is not optimised away, and the number of
    /// lives and lead times drawn. `counts` comes from
    /// [`Workspace::draw_counts`] after running the same trial. For the
    /// engine bench alone.
    #[doc(hidden)]
    pub fn draw_only(&self, trial: u64, counts: &DrawCounts, lives: &mut Vec<Life>) -> (f64, u64) {
        let model = self.model;
        let seed = TrialSeed::new(model.seed, trial);
        self.trial_lives(&seed, lives);
        let mut sum = 0.0;
        let mut draws = 0;
        let mut ages = seed.stream(StreamKey::InitialAges);
        let mut idx = 0;
        for (u, unit) in model.units.iter().enumerate() {
            let group = &model.groups[unit.group];
            for (j, &part) in unit.parts.iter().enumerate() {
                let age =
                    draw_initial_age(&group.initial_age[part], unit.index_in_group, &mut ages);
                let words = u64::from(counts.life_words.get(idx).copied().unwrap_or(0));
                idx += 1;
                if words == 0 {
                    continue;
                }
                let mut stream = seed.stream(StreamKey::Lives {
                    unit: u as u32,
                    position: j as u32,
                });
                sum += lives[part].sample_residual(age, &mut stream);
                draws += 1;
                while stream.position() < words {
                    sum += lives[part].sample_residual(0.0, &mut stream);
                    draws += 1;
                }
            }
        }
        for (p, part) in model.parts.iter().enumerate() {
            let mut stream = seed.stream(StreamKey::LeadTimes { part: p as u32 });
            let n = counts.leads.get(p).copied().unwrap_or(0);
            for _ in 0..n {
                sum += part.lead_time.sample(&mut stream);
            }
            draws += u64::from(n);
        }
        (sum, draws)
    }

    /// Like [`Simulator::run`], asserting the model's invariants after every
    /// event (stock identity, hold counts). For tests; panics on a broken one.
    pub fn run_checked(&self, trial: u64, ws: &mut Workspace) -> TrialOutcome {
        let seed = TrialSeed::new(self.model.seed, trial);
        let mut lives = std::mem::take(&mut ws.trial_lives);
        self.trial_lives(&seed, &mut lives);
        let out = self.dispatch(&seed, &lives, ws, true);
        ws.trial_lives = lives;
        out
    }
}

/// The workspace's per-trial state as slices, set up for one trial. Held
/// as slices (not the workspace's vectors) so that the event loop keeps
/// their addresses and lengths at hand instead of reloading them.
struct View<'a> {
    tourney: &'a mut Tourney,
    arrivals: &'a mut Arrivals,
    key_at: &'a mut [u64],
    done_at: &'a mut [Hours],
    cause: &'a mut [u8],
    units: &'a mut [UnitState],
    pos: &'a mut [Pos],
    stores: &'a mut [Store],
    shops: &'a mut [Shop],
    transport: &'a mut [Stream],
    lateral: &'a mut [Stream],
    changes: &'a mut Vec<Change>,
    books: &'a mut Books,
}

/// One trial in progress. `NET`: the scenario has sites, a depot, lateral
/// supply or rotables; `UP`: the trial counts units up. Both are fixed per
/// simulator, so the loop is compiled once for each and a scenario without
/// them pays for none of their tests.
struct Run<'a, 'm, const NET: bool, const UP: bool> {
    sim: &'a Simulator<'m>,
    lives: &'a [Life],
    ws: View<'a>,
    horizon: Hours,
    out: TrialOutcome,
    check: bool,
    /// With `[money]`: the last clock time a discount factor was computed
    /// for, and that factor.
    disc: (Hours, f64),
    /// With `[money]` and a discount rate other than 0.
    discounting: bool,
}

fn draw_initial_age(spec: &InitialAge, index_in_group: usize, ages: &mut Stream) -> Hours {
    // One uniform is drawn for every position whatever the spec, so that the
    // ages of later positions do not depend on the specs of earlier ones.
    let u = crate::dist::open_uniform(ages);
    match spec {
        InitialAge::New => 0.0,
        InitialAge::Fixed(a) => *a,
        InitialAge::Uniform { low, high } => low + (high - low) * u,
        InitialAge::List(v) => v.get(index_in_group).copied().unwrap_or(0.0),
    }
}

impl<'a, 'm, const NET: bool, const UP: bool> Run<'a, 'm, NET, UP> {
    fn start(
        sim: &'a Simulator<'m>,
        seed: &TrialSeed,
        lives: &'a [Life],
        ws: &'a mut Workspace,
        check: bool,
    ) -> Self {
        let model = sim.model;
        let n_parts = model.parts.len();
        ws.tourney.reset(model.units.len());
        ws.units.clear();
        ws.pos.clear();
        ws.key_at.clear();
        ws.done_at.clear();
        ws.cause.clear();
        let n_sites = model.sites.len();
        let depot_stores = sim.depot_stores;
        let n_stores = depot_stores + n_sites * n_parts;
        ws.arrivals.reset(n_stores);
        ws.stores.resize_with(n_stores, Store::default);
        for (i, s) in ws.stores.iter_mut().enumerate() {
            // Depot stores first, then site by site in part-type order.
            s.on_hand = if i < depot_stores {
                sim.policy[i].stock.depot()
            } else {
                let k = i - depot_stores;
                sim.policy[k % n_parts].stock.site(k / n_parts)
            };
            s.failures.clear();
            s.planned.clear();
            s.requests.clear();
            s.area = 0.0;
            s.last = 0.0;
            s.disc_last = 1.0;
            s.pv_area = 0.0;
            s.year = 0;
            s.year_area0 = 0.0;
            s.year_end = match &sim.money {
                Some(c) if c.years > 1 => c.hours_per_year,
                _ => f64::INFINITY,
            };
            s.back_area = 0.0;
            s.pending.clear();
            s.beyond = 0;
        }
        for (p, s) in ws.stores.iter_mut().take(n_parts).enumerate() {
            s.supply.leads = seed.stream(StreamKey::LeadTimes { part: p as u32 });
            s.supply.lead_next = LEAD_BATCH;
        }
        ws.shops.clear();
        ws.transport.clear();
        ws.lateral.clear();
        ws.changes.clear();
        if sim.repairable.iter().any(|&r| r) {
            for (p, pt) in model.parts.iter().enumerate() {
                let channels = pt.repair.as_ref().and_then(|r| r.channels).unwrap_or(0);
                ws.shops.push(Shop {
                    times: seed.stream(StreamKey::RepairTimes { part: p as u32 }),
                    condemn: seed.stream(StreamKey::Condemn { part: p as u32 }),
                    free: vec![0.0; channels as usize],
                });
            }
        }
        if sim.depot {
            for site in 0..n_sites {
                ws.transport
                    .push(seed.stream(StreamKey::Transport { site: site as u32 }));
            }
        }
        if sim.lateral {
            ws.lateral.push(seed.stream(StreamKey::Lateral));
        }
        let mut ages = seed.stream(StreamKey::InitialAges);
        for (u, unit) in model.units.iter().enumerate() {
            let first = ws.pos.len();
            let group = &model.groups[unit.group];
            for (j, &part) in unit.parts.iter().enumerate() {
                let age =
                    draw_initial_age(&group.initial_age[part], unit.index_in_group, &mut ages);
                let mut lives_stream = seed.stream(StreamKey::Lives {
                    unit: u as u32,
                    position: j as u32,
                });
                let active = sim.active.is_active(part);
                let (fail_op, due_op, limit_op) = if active {
                    let life = lives[part].sample_residual(age, &mut lives_stream);
                    let rule = sim.policy[part].rule;
                    let limit = model.parts[part].hard_limit;
                    (
                        life,
                        rule.due_at(0.0, age).unwrap_or(f64::INFINITY),
                        limit.map_or(f64::INFINITY, |l| (l - age).max(0.0)),
                    )
                } else {
                    (f64::INFINITY, f64::INFINITY, f64::INFINITY)
                };
                ws.pos.push(Pos {
                    part,
                    status: Status::Working,
                    fail_op,
                    due_op,
                    limit_op,
                    lives: lives_stream,
                });
                ws.key_at.push(reading_key(fail_op, due_op.min(limit_op)));
                ws.done_at.push(f64::INFINITY);
                ws.cause.push(CAUSE_NONE);
            }
            ws.units.push(UnitState {
                op: 0.0,
                last: 0.0,
                first_pos: first,
                n_pos: unit.parts.len(),
                holding_down: 0,
                held_sum: 0,
                waiting_planned: 0,
                replacing: 0,
                next_pos: 0,
                next_op: f64::INFINITY,
                site: unit.site,
                store_base: depot_stores + unit.site * n_parts,
                transfers: 0,
            });
        }
        let mut out = TrialOutcome::zeroed(n_parts);
        if model.has_sites() {
            out.sites = vec![SiteOutcome::default(); n_sites];
        }
        ws.books.stockout_year.clear();
        ws.books.stockout_year.resize(n_parts, 0);
        ws.books.year_shelf.clear();
        ws.books.shelf_pv.clear();
        if let Some(c) = &sim.money {
            out.year_spend = vec![0.0; c.years * n_parts];
            ws.books.year_shelf.resize(c.years * n_parts, 0.0);
            ws.books.shelf_pv.resize(n_parts, 0.0);
        }
        let ws = View {
            tourney: &mut ws.tourney,
            arrivals: &mut ws.arrivals,
            key_at: &mut ws.key_at,
            done_at: &mut ws.done_at,
            cause: &mut ws.cause,
            units: &mut ws.units,
            pos: &mut ws.pos,
            stores: &mut ws.stores,
            shops: &mut ws.shops,
            transport: &mut ws.transport,
            lateral: &mut ws.lateral,
            changes: &mut ws.changes,
            books: &mut ws.books,
        };
        let mut run = Run {
            sim,
            lives,
            ws,
            horizon: model.horizon,
            out,
            check,
            disc: (0.0, 1.0),
            discounting: sim.money.is_some_and(|c| c.delta != 0.0),
        };
        for u in 0..run.ws.units.len() {
            run.schedule_unit(u, 0.0);
        }
        run
    }

    /// Change a position's status and the figures derived from it (inlined,
    /// so that a constant status costs no branch).
    #[inline(always)]
    fn set_status(&mut self, idx: usize, status: Status) {
        let p = &mut self.ws.pos[idx];
        p.status = status;
        let (fail, due, cause) = match status {
            Status::Working => (p.fail_op, p.due_op.min(p.limit_op), CAUSE_NONE),
            Status::WaitingPlanned => (p.fail_op, p.limit_op, CAUSE_NONE),
            Status::Failed | Status::Grounded | Status::Transfer => {
                (f64::INFINITY, f64::INFINITY, CAUSE_WAITING)
            }
            Status::Replacing { planned } => (
                f64::INFINITY,
                f64::INFINITY,
                if planned {
                    CAUSE_PLANNED
                } else {
                    CAUSE_UNPLANNED
                },
            ),
        };
        self.ws.key_at[idx] = reading_key(fail, due);
        self.ws.done_at[idx] = f64::INFINITY;
        self.ws.cause[idx] = cause;
    }

    /// Set the unit's next own event: while up, its next failure, due or
    /// hard limit; while down, the earliest end of a replacement under way
    /// (lower positions first at the same instant), or none.
    #[inline(always)]
    fn schedule_unit(&mut self, u: usize, now: Hours) {
        let unit = &self.ws.units[u];
        let (first, n) = (unit.first_pos, unit.n_pos);
        if unit.holding_down > 0 {
            let transfers = if NET { unit.transfers } else { 0 };
            if unit.replacing + transfers == 0 {
                // Down and only waiting for spares: no event of its own.
                self.ws.tourney.set(u, f64::INFINITY, CLASS_COMPLETION);
                return;
            }
            let mut best = f64::INFINITY;
            let mut best_j = 0;
            let mut class = CLASS_COMPLETION;
            if transfers == 0 {
                for (j, &d) in self.ws.done_at[first..first + n].iter().enumerate() {
                    if d < best {
                        best = d;
                        best_j = j;
                    }
                }
            } else {
                // Completions and lateral transfers: at the same instant a
                // completion first, then lower positions first.
                for j in 0..n {
                    let d = self.ws.done_at[first + j];
                    let c = if self.ws.pos[first + j].status == Status::Transfer {
                        CLASS_LATERAL
                    } else {
                        CLASS_COMPLETION
                    };
                    if d < best || (d == best && d.is_finite() && c < class) {
                        best = d;
                        best_j = j;
                        class = c;
                    }
                }
            }
            self.ws.units[u].next_pos = best_j;
            let time = if best < self.horizon {
                best
            } else {
                f64::INFINITY
            };
            self.ws.tourney.set(u, time, class);
            return;
        }
        // The least key: the earliest reading, a failure before a due at the
        // same reading, then the lower position (strict `<` in index order).
        let (best, best_j) = least_key(&self.ws.key_at[first..first + n]);
        let best_op = f64::from_bits(best >> 1);
        let best_class = if best & 1 == 0 {
            CLASS_FAILURE
        } else {
            CLASS_DUE
        };
        let time = if best_op.is_finite() {
            now + (best_op - unit.op).max(0.0)
        } else {
            f64::INFINITY
        };
        let unit = &mut self.ws.units[u];
        unit.next_pos = best_j;
        unit.next_op = best_op;
        let time = if time < self.horizon {
            time
        } else {
            f64::INFINITY
        };
        self.ws.tourney.set(u, time, best_class);
    }

    /// Bring the unit's clocks and down-time books up to `now`.
    #[inline(always)]
    fn advance_unit(&mut self, u: usize, now: Hours) {
        let unit = &self.ws.units[u];
        let dt = now - unit.last;
        if dt <= 0.0 {
            return;
        }
        if unit.holding_down == 0 {
            self.ws.units[u].op += dt;
        } else {
            // Cause priority: waiting for a spare, then unplanned, then planned
            // work; charged to the first position (index order) with that cause.
            let (first, n) = (unit.first_pos, unit.n_pos);
            let (rank, at) = if unit.holding_down == 1 {
                let at = first + unit.held_sum;
                (self.ws.cause[at], at)
            } else {
                let mut rank = CAUSE_NONE;
                let mut at = first;
                for (j, &c) in self.ws.cause[first..first + n].iter().enumerate() {
                    if c < rank {
                        rank = c;
                        at = first + j;
                    }
                }
                (rank, at)
            };
            if rank != CAUSE_NONE {
                self.book_down(rank, at, dt);
            }
        }
        self.ws.units[u].last = now;
    }

    /// Charge `dt` unit-hours down to cause `rank` and to the part type of
    /// position `idx`.
    #[inline(always)]
    fn book_down(&mut self, rank: u8, idx: usize, dt: Hours) {
        match rank {
            CAUSE_WAITING => self.out.down_waiting += dt,
            CAUSE_UNPLANNED => self.out.down_unplanned += dt,
            _ => self.out.down_planned += dt,
        }
        let part = self.ws.pos[idx].part;
        self.out.parts[part].down_hours += dt;
    }

    /// The store of part type `part` at unit `u`'s site.
    #[inline(always)]
    fn store_of(&self, u: usize, part: usize) -> usize {
        if NET {
            self.ws.units[u].store_base + part
        } else {
            part
        }
    }

    fn touch_store(&mut self, store: usize, now: Hours) {
        if self.sim.money.is_some() {
            self.shelf_books(store, now);
        }
        let s = &mut self.ws.stores[store];
        s.area += s.on_hand as f64 * (now - s.last);
        s.last = now;
    }

    /// With `[money]`: the store's books before its spares on hand change
    /// at `to` (its area is not yet brought up to `to`). The spare-hours of
    /// each year are the differences of the store's area at the year ends
    /// (holding split across years exactly, with one comparison per touch
    /// inside a year), and the discounted spare-hours add `n (D(last) -
    /// D(to))`, divided by `delta` at the end (MODEL.md, "Money over time":
    /// holding accrues continuously), with `D(t) = exp(-delta t)` shared
    /// with the costs booked at the same instant. Kept out of line so
    /// that a scenario without money pays one test per touch.
    #[inline(never)]
    fn shelf_books(&mut self, store: usize, to: Hours) {
        if to >= self.ws.stores[store].year_end {
            self.year_ends(store, to);
        }
        if self.discounting {
            let d = self.discount_at(to);
            let s = &mut self.ws.stores[store];
            s.pv_area += f64::from(s.on_hand) * (s.disc_last - d);
            s.disc_last = d;
        }
    }

    /// The store's clock passes one or more year ends by `to`: each ended
    /// year gets the spare-hours since its start.
    #[inline(never)]
    fn year_ends(&mut self, store: usize, to: Hours) {
        let Some(c) = self.sim.money else {
            return;
        };
        let np = self.out.parts.len();
        let ds = self.sim.depot_stores;
        let part = if store < ds { store } else { (store - ds) % np };
        let s = &mut self.ws.stores[store];
        while to >= s.year_end {
            let at_end = s.area + f64::from(s.on_hand) * (s.year_end - s.last);
            self.ws.books.year_shelf[s.year as usize * np + part] += at_end - s.year_area0;
            s.year_area0 = at_end;
            s.year += 1;
            s.year_end = if s.year as usize + 1 >= c.years {
                f64::INFINITY
            } else {
                (s.year + 1) as f64 * c.hours_per_year
            };
        }
    }

    /// The discount factor at clock time `t` (with `[money]`), remembered
    /// for the next call at the same instant.
    #[inline(always)]
    fn discount_at(&mut self, t: Hours) -> f64 {
        let Some(c) = &self.sim.money else {
            return 1.0;
        };
        if t != self.disc.0 {
            self.disc = (t, c.discount(t));
        }
        self.disc.1
    }

    /// With `[money]`: `amount` spent on `part` at clock time `at` goes into
    /// its year and, discounted, into its present value.
    #[inline(always)]
    fn book(&mut self, part: usize, amount: f64, at: Hours) {
        if let Some(c) = self.sim.money {
            let np = self.out.parts.len();
            self.out.year_spend[c.year(at) * np + part] += amount;
            let d = self.discount_at(at);
            self.out.parts[part].pv_spend += amount * d;
        }
    }

    /// A unit goes from up to down or gains another reason to stay down.
    /// The caller reschedules the unit once its positions are set.
    #[inline(always)]
    fn hold_down(&mut self, u: usize, j: usize, now: Hours) {
        let unit = &mut self.ws.units[u];
        if UP && unit.holding_down == 0 {
            ready::log(
                self.ws.changes,
                Change {
                    time: now,
                    site: unit.site as u32,
                    delta: -1,
                },
            );
        }
        unit.holding_down += 1;
        unit.held_sum += j;
    }

    /// The lead time of `part`'s next purchase order (whichever store
    /// places it: the `k`-th order takes the `k`-th draw).
    #[inline(always)]
    fn lead_time(&mut self, part: usize) -> Hours {
        let s = &mut self.ws.stores[part].supply;
        if s.lead_next == LEAD_BATCH {
            // Independent draws overlap when made together; the k-th order
            // still gets the k-th draw of the stream.
            let lead_time = &self.sim.model.parts[part].lead_time;
            for slot in &mut s.lead_buf {
                *slot = lead_time.sample(&mut s.leads);
            }
            s.lead_next = 0;
        }
        let lead = s.lead_buf[s.lead_next];
        s.lead_next += 1;
        lead
    }

    /// Place one purchase order for `part` at `now`, arriving at `store`.
    #[inline(always)]
    fn order(&mut self, part: usize, store: usize, now: Hours) {
        let lead = self.lead_time(part);
        let po = &mut self.out.parts[part];
        po.orders += 1;
        let price = self.sim.model.parts[part].price;
        po.parts_cost += price;
        self.book(part, price, now);
        self.send(store, now + lead);
    }

    /// A spare is on its way to `store` and arrives at `time`.
    #[inline(always)]
    fn send(&mut self, store: usize, time: Hours) {
        if time < self.horizon {
            // Keep the list latest first. This order is the latest placed,
            // so it goes before every arrival at or before its own time. The
            // list holds a few orders, so one insertion-sort step is cheapest.
            let pending = &mut self.ws.stores[store].pending;
            let mut i = pending.len();
            pending.push(time);
            while i > 0 && pending[i - 1] <= time {
                pending[i] = pending[i - 1];
                i -= 1;
            }
            pending[i] = time;
            let earliest = i + 1 == pending.len();
            if earliest && (self.ws.stores[store].awaited::<NET>() || self.sim.all_events) {
                // It is now the earliest awaited arrival.
                self.refresh_arrival(store);
            }
        } else {
            self.ws.stores[store].beyond += 1;
        }
    }

    /// Book the arrivals of `store` up to and including `now` (an arrival
    /// comes before a failure or a due at the same instant). Only called
    /// while no demand for the store waits, so each arrival puts a spare on
    /// the shelf.
    #[inline]
    fn settle(&mut self, store: usize, now: Hours) {
        while let Some(&t) = self.ws.stores[store].pending.last() {
            if t > now {
                break;
            }
            self.ws.stores[store].pending.pop();
            if self.sim.money.is_some() {
                self.shelf_books(store, t);
            }
            let s = &mut self.ws.stores[store];
            s.area += s.on_hand as f64 * (t - s.last);
            s.last = t;
            s.on_hand += 1;
        }
    }

    /// Make the store's next arrival an event while demands for it wait,
    /// and take it out otherwise.
    #[inline(always)]
    fn refresh_arrival(&mut self, store: usize) {
        let s = &self.ws.stores[store];
        let awaited = s.awaited::<NET>() || self.sim.all_events;
        let t = match s.pending.last() {
            Some(&t) if awaited => t,
            _ => f64::INFINITY,
        };
        self.ws.arrivals.set(store, t);
    }

    /// Start the replacement of position `j` of unit `u` (its spare in
    /// hand, the unit held down by it), then set the unit's next event.
    fn start_work(&mut self, u: usize, j: usize, planned: bool, now: Hours) {
        self.start_replacement(u, j, planned, now);
        let done = self.ws.done_at[self.ws.units[u].first_pos + j];
        let unit = &self.ws.units[u];
        if unit.holding_down == 1
            && unit.waiting_planned == 0
            && done < self.horizon
            && !self.sim.all_events
            // Another part of this unit due at this very reading starts at
            // this instant too (see `next_due_at_this_reading`).
            && (!planned
                || f64::from_bits(
                    least_key(&self.ws.key_at[unit.first_pos..unit.first_pos + unit.n_pos]).0 >> 1,
                ) > unit.op)
        {
            // Nothing can touch this unit until the work ends: its parts do
            // not age while it is down, and no demand of it waits for a
            // spare. So the work is finished now, as of its end time.
            // The work is the unit's only reason to be down, so its down
            // time goes to this position's cause without a scan.
            let unit = &mut self.ws.units[u];
            let dt = done - unit.last;
            if dt > 0.0 {
                unit.last = done;
                let idx = unit.first_pos + j;
                self.book_down(self.ws.cause[idx], idx, dt);
            }
            self.fit_new_part(u, j, done);
        } else {
            self.schedule_unit(u, now);
        }
    }

    /// Take a spare for position `j` of unit `u` and start the work.
    fn start_replacement(&mut self, u: usize, j: usize, planned: bool, now: Hours) {
        self.ws.units[u].replacing += 1;
        let idx = self.ws.units[u].first_pos + j;
        let part = self.ws.pos[idx].part;
        let pt = &self.sim.model.parts[part];
        self.set_status(idx, Status::Replacing { planned });
        let po = &mut self.out.parts[part];
        let (duration, labour) = if planned {
            po.planned += 1;
            po.labour_planned += pt.labour_planned;
            (pt.duration_planned, pt.labour_planned)
        } else {
            po.labour_unplanned += pt.labour_unplanned;
            (pt.duration_unplanned, pt.labour_unplanned)
        };
        self.ws.done_at[idx] = now + duration;
        self.book(part, labour, now);
    }

    fn event_loop(&mut self) {
        loop {
            if self.check {
                self.check_invariants();
            }
            let (t, class, u) = self.ws.tourney.top();
            // An arrival at the same instant goes by its class: at the depot
            // after completions, at a site after lateral transfers too, and
            // before failures and dues.
            let (ta, store) = self.ws.arrivals.first;
            let at_depot = NET && store < self.sim.depot_stores;
            if ta < t
                || (ta == t
                    && ta.is_finite()
                    && if at_depot { CLASS_DEPOT } else { CLASS_SITE } < class)
            {
                self.out.events += 1;
                if at_depot {
                    self.on_depot_arrival(store, ta);
                } else {
                    self.on_arrival(store, ta);
                }
                continue;
            }
            if !t.is_finite() {
                break;
            }
            self.out.events += 1;
            let j = self.ws.units[u].next_pos;
            if class == CLASS_COMPLETION {
                self.on_completion(u, j, t);
                continue;
            }
            if NET && class == CLASS_LATERAL {
                self.on_transfer(u, j, t);
                continue;
            }
            self.advance_unit(u, t);
            // Snap the clock to the event's reading (no rounding drift).
            self.ws.units[u].op = self.ws.units[u].next_op;
            if class == CLASS_FAILURE {
                self.on_failure(u, j, t);
            } else {
                self.on_due(u, j, t);
                if self.ws.units[u].holding_down > 0 {
                    self.next_due_at_this_reading(u, t);
                }
            }
        }
        if self.check {
            self.check_invariants();
        }
    }

    /// Assert the model's invariants (used by tests through `run_checked`):
    /// the stock identities of MODEL.md at every store, and the hold counts.
    fn check_invariants(&self) {
        let model = self.sim.model;
        let n_parts = model.parts.len();
        let ds = self.sim.depot_stores;
        for (i, s) in self.ws.stores.iter().enumerate() {
            let on_order = (s.pending.len() as u64 + s.beyond) as i64;
            let failures = s.failures.len() as i64;
            let planned = s.planned.len() as i64;
            assert!(
                s.on_hand == 0 || !s.awaited::<NET>(),
                "spare on the shelf while demands wait (store {i})"
            );
            if i < ds {
                // Depot: on hand + on order (+ in repair) - requests waiting
                // = S_0 (rotables: less the planned demands that have asked
                // but not yet removed their part).
                let part = i;
                let mut level = self.sim.policy[part].stock.depot() as i64;
                if self.sim.repairable[part] {
                    for site in 0..model.sites.len() {
                        level -= self.ws.stores[ds + site * n_parts + part].planned.len() as i64;
                    }
                }
                let lhs = s.on_hand as i64 + on_order - s.requests.len() as i64;
                assert_eq!(lhs, level, "depot stock identity, part {part}");
                assert!(s.failures.is_empty() && s.planned.is_empty());
                continue;
            }
            let (site, part) = ((i - ds) / n_parts, (i - ds) % n_parts);
            let level = self.sim.policy[part].stock.site(site) as i64;
            assert!(s.requests.is_empty());
            let lhs = if self.sim.depot {
                // On hand + in transit from the depot + requests waiting
                // there - demands waiting here.
                let asked = self.ws.stores[part]
                    .requests
                    .iter()
                    .filter(|&&r| r as usize == site)
                    .count() as i64;
                s.on_hand as i64 + on_order + asked - failures - planned
            } else if self.sim.repairable[part] {
                // On hand + in repair + on order - failures waiting (a
                // waiting planned demand's part is still fitted).
                s.on_hand as i64 + on_order - failures
            } else {
                s.on_hand as i64 + on_order - failures - planned
            };
            assert_eq!(lhs, level, "stock identity, site {site}, part {part}");
        }
        for unit in self.ws.units.iter() {
            let (mut held, mut held_sum, mut replacing, mut transfers) = (0, 0, 0, 0);
            for j in 0..unit.n_pos {
                let status = self.ws.pos[unit.first_pos + j].status;
                if matches!(
                    status,
                    Status::Failed | Status::Grounded | Status::Replacing { .. } | Status::Transfer
                ) {
                    held += 1;
                    held_sum += j;
                }
                if matches!(status, Status::Replacing { .. }) {
                    replacing += 1;
                }
                if status == Status::Transfer {
                    transfers += 1;
                }
            }
            assert_eq!(held, unit.holding_down, "hold count");
            assert_eq!(held_sum, unit.held_sum, "held positions");
            assert_eq!(replacing, unit.replacing, "replacement count");
            assert_eq!(transfers, unit.transfers, "transfer count");
        }
        // Every unit-hour up to each unit's last update is up or down: the
        // operating clocks and the down-time books add up to those times.
        let up: f64 = self.ws.units.iter().map(|u| u.op).sum();
        let booked: f64 = self.ws.units.iter().map(|u| u.last).sum();
        let down = self.out.down_hours();
        assert!(
            (up + down - booked).abs() <= 1e-9 * booked.max(1.0),
            "unit-hours: up {up} + down {down} != {booked}"
        );
    }

    /// After a due has stopped unit `u`: another of its parts due at the
    /// same reading is handled at this same instant (replacements on one
    /// unit run in parallel, MODEL.md), not when the unit is up again.
    /// Only a due shares a reading with another due (block grids, parts
    /// fitted together, parts overdue at time 0); lives come from
    /// continuous distributions, so a failure shares its reading with
    /// nothing.
    fn next_due_at_this_reading(&mut self, u: usize, now: Hours) {
        let unit = &self.ws.units[u];
        let (key, j) = least_key(&self.ws.key_at[unit.first_pos..unit.first_pos + unit.n_pos]);
        if f64::from_bits(key >> 1) <= unit.op && now < self.horizon {
            let class = if key & 1 == 0 {
                CLASS_FAILURE
            } else {
                CLASS_DUE
            };
            let unit = &mut self.ws.units[u];
            unit.next_pos = j;
            unit.next_op = unit.op;
            self.ws.tourney.set(u, now, class);
        }
    }

    fn on_failure(&mut self, u: usize, j: usize, now: Hours) {
        let idx = self.ws.units[u].first_pos + j;
        let part = self.ws.pos[idx].part;
        self.out.parts[part].failures += 1;
        let was = self.ws.pos[idx].status;
        self.hold_down(u, j, now);
        if was == Status::WaitingPlanned {
            // The waiting planned demand becomes a failure: no new order, no
            // second stock-out; it joins the waiting failures now. A
            // repairable part is removed at once, failed.
            self.join_failures(u, j, part, Status::Failed, now);
            if NET && self.sim.repairable[part] {
                let store = self.ws.units[u].store_base + part;
                self.remove(part, store, true, now);
            }
            return;
        }
        self.demand(u, j, idx, part, false, now);
    }

    fn on_due(&mut self, u: usize, j: usize, now: Hours) {
        let idx = self.ws.units[u].first_pos + j;
        let part = self.ws.pos[idx].part;
        if self.ws.pos[idx].status == Status::WaitingPlanned {
            // A safety-critical part reached its hard limit while waiting:
            // the unit is held down until a spare comes. A repairable part
            // is removed now (a planned removal: it has not failed).
            self.hold_down(u, j, now);
            self.join_failures(u, j, part, Status::Grounded, now);
            if NET && self.sim.repairable[part] {
                let store = self.ws.units[u].store_base + part;
                self.remove(part, store, false, now);
            }
            return;
        }
        self.demand(u, j, idx, part, true, now);
    }

    /// A planned demand of position `j` of unit `u` that waits for a spare
    /// now holds its unit down (the caller has counted the hold): it leaves
    /// the waiting planned replacements for the end of the waiting
    /// failures, with `status`, and the unit's next event is set.
    fn join_failures(&mut self, u: usize, j: usize, part: usize, status: Status, now: Hours) {
        self.ws.units[u].waiting_planned -= 1;
        let store = &mut self.ws.stores[self.store_of(u, part)];
        store
            .planned
            .retain(|&(a, b)| (a as usize, b as usize) != (u, j));
        store.failures.push_back((u as u32, j as u32));
        self.set_status(self.ws.units[u].first_pos + j, status);
        self.schedule_unit(u, now);
    }

    /// A new demand for a spare from position `j` of unit `u` (a failure,
    /// or a planned replacement falling due) at its site's store: its
    /// resupply at once, then the spare on the shelf if there is one, else
    /// a place in the queue. A failure's unit is already held down by the
    /// caller.
    fn demand(&mut self, u: usize, j: usize, idx: usize, part: usize, planned: bool, now: Hours) {
        self.out.parts[part].demands += 1;
        let store = self.store_of(u, part);
        // Arrivals up to this instant come first; the new order cannot be
        // among them.
        if !self.ws.stores[store].awaited::<NET>() {
            self.settle(store, now);
        }
        if NET && !self.sim.simple[part] {
            self.network_demand(u, j, idx, part, store, planned, now);
            return;
        }
        // The first part's flow: one purchase order to this store.
        self.order(part, store, now);
        if self.ws.stores[store].on_hand > 0 {
            self.touch_store(store, now);
            self.ws.stores[store].on_hand -= 1;
            if planned {
                self.hold_down(u, j, now);
            }
            self.start_work(u, j, planned, now);
            return;
        }
        self.stockout(u, part, now);
        self.wait(u, j, idx, store, planned, now);
        self.schedule_unit(u, now);
    }

    /// Count a demand of unit `u` for `part` that found its shelf empty.
    #[inline(always)]
    fn stockout(&mut self, u: usize, part: usize, now: Hours) {
        self.out.parts[part].stockouts += 1;
        // The whole years with a stock-out: the first of each year counts.
        let y = (now / self.sim.year_hours) as u32;
        let last = &mut self.ws.books.stockout_year[part];
        if y < self.sim.whole_years && *last != y + 1 {
            *last = y + 1;
            self.out.parts[part].stockout_years += 1;
        }
        if NET && let Some(site) = self.out.sites.get_mut(self.ws.units[u].site) {
            site.stockouts += 1;
        }
    }

    /// Position `j` of unit `u` joins the queue of `store` (failures or
    /// planned replacements), and the store's next arrival is awaited.
    #[inline(always)]
    fn wait(&mut self, u: usize, j: usize, idx: usize, store: usize, planned: bool, now: Hours) {
        let s = &mut self.ws.stores[store];
        s.back_area -= now;
        if planned {
            s.planned.push_back((u as u32, j as u32));
            self.ws.units[u].waiting_planned += 1;
            self.set_status(idx, Status::WaitingPlanned);
        } else {
            s.failures.push_back((u as u32, j as u32));
            self.set_status(idx, Status::Failed);
        }
        self.refresh_arrival(store);
    }

    /// A demand with a depot, a repairable part or lateral supply: decide
    /// where the spare comes from (its own shelf, another site's, or the
    /// queue), then place the resupply for the store the spare came from,
    /// and remove a repairable part that comes out now.
    #[allow(clippy::too_many_arguments)]
    fn network_demand(
        &mut self,
        u: usize,
        j: usize,
        idx: usize,
        part: usize,
        store: usize,
        planned: bool,
        now: Hours,
    ) {
        let site = self.ws.units[u].site;
        let repairable = self.sim.repairable[part];
        if self.ws.stores[store].on_hand > 0 {
            self.touch_store(store, now);
            self.ws.stores[store].on_hand -= 1;
            self.resupply(part, site, now);
            if planned {
                self.hold_down(u, j, now);
            }
            // A failed part comes out now; a planned one as its
            // replacement starts, which is now.
            if repairable {
                self.remove(part, store, !planned, now);
            }
            self.start_work(u, j, planned, now);
            return;
        }
        self.stockout(u, part, now);
        if !planned
            && self.sim.lateral
            && let Some(giver) = self.giver(part, site, now)
        {
            let from = self.sim.depot_stores + giver * self.sim.model.parts.len() + part;
            self.touch_store(from, now);
            self.ws.stores[from].on_hand -= 1;
            self.resupply(part, giver, now);
            if repairable {
                self.remove(part, from, true, now);
            }
            let Some(lateral) = &self.sim.model.lateral else {
                return;
            };
            let time = now + lateral.transfer.sample(&mut self.ws.lateral[0]);
            let po = &mut self.out.parts[part];
            po.laterals += 1;
            po.transport_cost += lateral.cost_per_transfer;
            let cost = lateral.cost_per_transfer;
            self.book(part, cost, now);
            if let Some(s) = self.out.sites.get_mut(site) {
                s.laterals_taken += 1;
            }
            if let Some(s) = self.out.sites.get_mut(giver) {
                s.laterals_given += 1;
            }
            self.ws.units[u].transfers += 1;
            self.set_status(idx, Status::Transfer);
            self.ws.done_at[idx] = time;
            self.schedule_unit(u, now);
            return;
        }
        self.resupply(part, site, now);
        if repairable && !planned {
            self.remove(part, store, true, now);
        }
        self.wait(u, j, idx, store, planned, now);
        self.schedule_unit(u, now);
    }

    /// The site other than `site` with the most spares of `part` on hand
    /// (ties: the lower site), if any has one.
    fn giver(&mut self, part: usize, site: usize, now: Hours) -> Option<usize> {
        let n_parts = self.sim.model.parts.len();
        let mut best: Option<(u32, usize)> = None;
        for g in 0..self.sim.model.sites.len() {
            if g == site {
                continue;
            }
            let store = self.sim.depot_stores + g * n_parts + part;
            if !self.ws.stores[store].awaited::<NET>() {
                self.settle(store, now);
            }
            let on_hand = self.ws.stores[store].on_hand;
            if on_hand > 0 && best.is_none_or(|(b, _)| on_hand > b) {
                best = Some((on_hand, g));
            }
        }
        best.map(|(_, g)| g)
    }

    /// One demand's resupply for the store of `site`: a request to the
    /// depot, or without one a purchase order for a consumable (a
    /// repairable part's removal brings its spare back instead).
    fn resupply(&mut self, part: usize, site: usize, now: Hours) {
        if self.sim.depot {
            self.request(part, site, now);
        } else if !self.sim.repairable[part] {
            let store = self.sim.depot_stores + site * self.sim.model.parts.len() + part;
            self.order(part, store, now);
        }
    }

    /// A request from `site` to the depot for `part`: the depot buys a
    /// consumable one for one, and ships a spare at once if it has one,
    /// else the request waits (first come first served across sites).
    fn request(&mut self, part: usize, site: usize, now: Hours) {
        self.out.parts[part].requests += 1;
        let depot = part;
        if !self.ws.stores[depot].awaited::<NET>() {
            self.settle(depot, now);
        }
        if !self.sim.repairable[part] {
            self.order(part, depot, now);
        }
        if self.ws.stores[depot].on_hand > 0 {
            self.touch_store(depot, now);
            self.ws.stores[depot].on_hand -= 1;
            self.ship(part, site, now);
        } else {
            let s = &mut self.ws.stores[depot];
            s.back_area -= now;
            s.requests.push_back(site as u32);
            self.refresh_arrival(depot);
        }
    }

    /// Ship a spare of `part` from the depot to `site`.
    fn ship(&mut self, part: usize, site: usize, now: Hours) {
        let Some(depot) = &self.sim.model.depot else {
            return;
        };
        let time = now + depot.transport[site].sample(&mut self.ws.transport[site]);
        let po = &mut self.out.parts[part];
        po.shipments += 1;
        po.transport_cost += depot.cost_per_shipment;
        let cost = depot.cost_per_shipment;
        self.book(part, cost, now);
        let store = self.sim.depot_stores + site * self.sim.model.parts.len() + part;
        self.send(store, time);
    }

    /// A repairable part comes out (`failed`, or at a planned replacement):
    /// one draw decides whether it is condemned (a purchase order) or
    /// repaired; either way it returns to the depot, or without one to
    /// `site_store`.
    fn remove(&mut self, part: usize, site_store: usize, failed: bool, now: Hours) {
        let Some(repair) = &self.sim.model.parts[part].repair else {
            return;
        };
        let dest = if self.sim.depot { part } else { site_store };
        let shop = &mut self.ws.shops[part];
        let chance = if failed {
            repair.condemn_failed
        } else {
            repair.condemn_planned
        };
        if crate::dist::open_uniform(&mut shop.condemn) < chance {
            self.out.parts[part].condemned += 1;
            self.order(part, dest, now);
            return;
        }
        let time = repair.time.sample(&mut shop.times);
        let start = if shop.free.is_empty() {
            now
        } else {
            // The channel free first (the lowest on ties) takes it.
            let mut k = 0;
            for (c, &f) in shop.free.iter().enumerate() {
                if f < shop.free[k] {
                    k = c;
                }
            }
            let start = shop.free[k].max(now);
            shop.free[k] = start + time;
            start
        };
        let done = start + time;
        let h = self.horizon;
        let po = &mut self.out.parts[part];
        po.repair_entries += 1;
        po.turnaround_hours += done - now;
        po.repair_hours += done.min(h) - now;
        if start < h {
            po.repairs += 1;
            let cost = if failed {
                po.repair_failed += repair.cost_failed;
                repair.cost_failed
            } else {
                po.repair_planned += repair.cost_planned;
                repair.cost_planned
            };
            // MODEL.md: a repair is charged when it starts.
            self.book(part, cost, start);
        }
        self.send(dest, done);
    }

    fn on_completion(&mut self, u: usize, j: usize, now: Hours) {
        self.advance_unit(u, now);
        self.fit_new_part(u, j, now);
    }

    /// A lateral transfer reaches the failed position it serves: its
    /// unplanned replacement starts.
    fn on_transfer(&mut self, u: usize, j: usize, now: Hours) {
        self.advance_unit(u, now);
        self.ws.units[u].transfers -= 1;
        self.start_work(u, j, false, now);
    }

    /// Fit a new part in position `j` of unit `u` at `now` (the unit's books
    /// already brought up to `now`), release the unit's hold and set its
    /// next event.
    #[inline(always)]
    fn fit_new_part(&mut self, u: usize, j: usize, now: Hours) {
        let idx = self.ws.units[u].first_pos + j;
        let part = self.ws.pos[idx].part;
        let op = self.ws.units[u].op;
        let life = self.lives[part].sample_residual(0.0, &mut self.ws.pos[idx].lives);
        let rule: Rule = self.sim.policy[part].rule;
        let limit = self.sim.model.parts[part].hard_limit;
        let p = &mut self.ws.pos[idx];
        p.fail_op = op + life;
        p.due_op = rule.due_at(op, 0.0).unwrap_or(f64::INFINITY);
        p.limit_op = limit.map_or(f64::INFINITY, |l| op + l);
        self.set_status(idx, Status::Working);
        let unit = &mut self.ws.units[u];
        unit.holding_down -= 1;
        unit.held_sum -= j;
        unit.replacing -= 1;
        if UP && unit.holding_down == 0 {
            ready::log(
                self.ws.changes,
                Change {
                    time: now,
                    site: unit.site as u32,
                    delta: 1,
                },
            );
        }
        self.schedule_unit(u, now);
    }

    /// The earliest order of a site's store arrives while demands for it
    /// wait: it serves the first waiting failure, else the first waiting
    /// planned replacement.
    fn on_arrival(&mut self, store: usize, now: Hours) {
        self.ws.stores[store].pending.pop();
        self.touch_store(store, now);
        let s = &mut self.ws.stores[store];
        if let Some((u, j)) = s.failures.pop_front() {
            s.back_area += now;
            let (u, j) = (u as usize, j as usize);
            self.advance_unit(u, now);
            let idx = self.ws.units[u].first_pos + j;
            let planned = self.ws.pos[idx].status == Status::Grounded;
            // The unit is already held down by this position; the hold passes
            // from waiting to the replacement work.
            self.start_work(u, j, planned, now);
        } else if let Some((u, j)) = s.planned.pop_front() {
            s.back_area += now;
            let (u, j) = (u as usize, j as usize);
            self.ws.units[u].waiting_planned -= 1;
            self.advance_unit(u, now);
            self.hold_down(u, j, now);
            if NET {
                let part = self.ws.pos[self.ws.units[u].first_pos + j].part;
                if self.sim.repairable[part] {
                    // The planned replacement starts: its part comes out now.
                    self.remove(part, store, false, now);
                }
            }
            self.start_work(u, j, true, now);
        } else {
            s.on_hand += 1;
        }
        self.refresh_arrival(store);
    }

    /// The earliest order of the depot's store of `part` arrives while
    /// requests wait: it is shipped to the first.
    fn on_depot_arrival(&mut self, part: usize, now: Hours) {
        self.ws.stores[part].pending.pop();
        self.touch_store(part, now);
        let s = &mut self.ws.stores[part];
        if let Some(site) = s.requests.pop_front() {
            s.back_area += now;
            self.ship(part, site as usize, now);
        } else {
            s.on_hand += 1;
        }
        self.refresh_arrival(part);
    }

    fn finish(mut self) -> TrialOutcome {
        let h = self.horizon;
        for u in 0..self.ws.units.len() {
            self.advance_unit(u, h);
        }
        let model = self.sim.model;
        let n_parts = model.parts.len();
        let ds = self.sim.depot_stores;
        for store in 0..self.ws.stores.len() {
            // Orders still on their way all arrive before the horizon, and
            // none is awaited (an awaited one would have been an event).
            self.settle(store, h);
            self.touch_store(store, h);
            if let Some(c) = self.sim.money {
                // The last year's spare-hours, and the discounted ones.
                let part = if store < ds {
                    store
                } else {
                    (store - ds) % n_parts
                };
                let s = &self.ws.stores[store];
                let books = &mut self.ws.books;
                books.year_shelf[s.year as usize * n_parts + part] += s.area - s.year_area0;
                books.shelf_pv[part] += if c.delta == 0.0 {
                    s.area
                } else {
                    s.pv_area / c.delta
                };
            }
            let s = &self.ws.stores[store];
            // Demands still waiting leave at the horizon.
            let back = s.back_area + s.waiting() as f64 * h;
            let (area, part) = (
                s.area,
                if store < ds {
                    store
                } else {
                    (store - ds) % n_parts
                },
            );
            let po = &mut self.out.parts[part];
            po.shelf_hours += area;
            if store < ds {
                po.depot_backorder_hours += back;
            } else {
                po.backorder_hours += back;
                if NET && let Some(site) = self.out.sites.get_mut((store - ds) / n_parts) {
                    site.backorder_hours += back;
                }
            }
        }
        for (pt, po) in model.parts.iter().zip(self.out.parts.iter_mut()) {
            po.holding = po.shelf_hours * pt.holding_per_hour;
            po.downtime_cost = po.down_hours * model.downtime_penalty;
        }
        if self.sim.money.is_some() {
            let books = &self.ws.books;
            for (p, (pt, po)) in model
                .parts
                .iter()
                .zip(self.out.parts.iter_mut())
                .enumerate()
            {
                po.pv_spend += books.shelf_pv[p] * pt.holding_per_hour;
            }
            for (i, (spend, shelf)) in self
                .out
                .year_spend
                .iter_mut()
                .zip(&books.year_shelf)
                .enumerate()
            {
                *spend += shelf * model.parts[i % n_parts].holding_per_hour;
            }
        }
        let unit_hours = model.units.len() as f64 * h;
        // Up hours are the units' operating clocks, counted apart from the
        // down-time books, so that up + down = units x horizon is a check.
        let up: f64 = self.ws.units.iter().map(|u| u.op).sum();
        self.out.up_hours = up;
        self.out.availability = if unit_hours > 0.0 {
            up / unit_hours
        } else {
            1.0
        };
        if NET {
            for unit in self.ws.units.iter() {
                if let Some(s) = self.out.sites.get_mut(unit.site) {
                    s.up_hours += unit.op;
                }
            }
        }
        if UP {
            self.count_units_up();
        }
        self.out
    }

    /// The hours with exactly `m` units up (fleet-wide and per site), each
    /// site's hours at its ready count, and the readiness.
    fn count_units_up(&mut self) {
        let sim = self.sim;
        let mut fleet = vec![0.0; sim.site_units.iter().sum::<u32>() as usize + 1];
        let per_site = !self.out.sites.is_empty();
        let mut sites: Vec<Vec<Hours>> = if per_site {
            sim.site_units
                .iter()
                .map(|&n| vec![0.0; n as usize + 1])
                .collect()
        } else {
            Vec::new()
        };
        let at_least = sim.model.ready.as_ref().map(|r| &r.at_least[..]);
        let mut site_ready = if per_site && at_least.is_some() {
            vec![0.0; sim.site_units.len()]
        } else {
            Vec::new()
        };
        let ready = ready::sweep(
            self.ws.changes,
            self.horizon,
            &sim.site_units,
            at_least,
            ready::Counts {
                fleet: &mut fleet,
                sites: &mut sites,
                site_ready: &mut site_ready,
            },
        );
        self.out.units_up = fleet;
        self.out.readiness = if at_least.is_some() {
            ready / self.horizon
        } else {
            0.0
        };
        for (i, s) in self.out.sites.iter_mut().enumerate() {
            s.units_up = std::mem::take(&mut sites[i]);
            s.ready_hours = site_ready.get(i).copied().unwrap_or(0.0);
        }
    }
}

#[cfg(test)]
mod tests {
    //! The event loop's three small structures against plain searches over
    //! the same values (common practice: a priority structure is checked
    //! against a linear scan of what it holds).

    use super::*;
    use rand::Rng;

    /// A reproducible source of test values.
    fn stream(k: u32) -> Stream {
        TrialSeed::new(2026, 12).stream(StreamKey::Parameters { part: k })
    }

    /// A time from a small set, so that exact ties are common, or infinity.
    fn time(rng: &mut Stream) -> Hours {
        match rng.next_u64() % 8 {
            0 => f64::INFINITY,
            1 => 0.0,
            k => (k * 250) as f64 + 0.5 * (rng.next_u64() % 2) as f64,
        }
    }

    /// The earliest of `events` (time, class) by plain search: the lowest
    /// time, then class, then unit.
    fn earliest(events: &[(Hours, u64)]) -> (Hours, u64, usize) {
        let mut best = (f64::INFINITY, CLASS_DUE, 0);
        let mut found = false;
        for (u, &(t, c)) in events.iter().enumerate() {
            let better = t < best.0 || (t == best.0 && (c < best.1 || (c == best.1 && !found)));
            if better {
                best = (t, c, u);
                found = true;
            }
        }
        best
    }

    #[test]
    fn the_tournament_always_holds_the_earliest_unit_event() {
        for units in [1usize, 2, 3, 5, 8, 13, 64, 100] {
            let mut rng = stream(units as u32);
            let mut tourney = Tourney::default();
            tourney.reset(units);
            let mut events = vec![(f64::INFINITY, CLASS_DUE); units];
            assert_eq!(tourney.top(), earliest(&events), "{units} units, fresh");
            for step in 0..2000 {
                let u = (rng.next_u64() % units as u64) as usize;
                let class = [
                    CLASS_COMPLETION,
                    CLASS_DEPOT,
                    CLASS_LATERAL,
                    CLASS_SITE,
                    CLASS_FAILURE,
                    CLASS_DUE,
                ][(rng.next_u64() % 6) as usize];
                let t = time(&mut rng);
                tourney.set(u, t, class);
                events[u] = (t, class);
                let (t_top, c_top, u_top) = tourney.top();
                let (t_want, c_want, u_want) = earliest(&events);
                assert_eq!(
                    (t_top.to_bits(), c_top, u_top),
                    (t_want.to_bits(), c_want, u_want),
                    "{units} units, step {step}"
                );
            }
        }
    }

    #[test]
    fn tournament_keys_order_by_time_then_class_then_unit() {
        let order = [
            tourney_key(0.0, CLASS_DUE, 9),
            tourney_key(f64::MIN_POSITIVE, CLASS_COMPLETION, 0),
            tourney_key(1.0, CLASS_COMPLETION, 5),
            tourney_key(1.0, CLASS_FAILURE, 0),
            tourney_key(1.0, CLASS_FAILURE, 1),
            tourney_key(1.0, CLASS_DUE, 0),
            tourney_key(1.0 + f64::EPSILON, CLASS_COMPLETION, 0),
            tourney_key(1e300, CLASS_DUE, 3),
            tourney_key(f64::INFINITY, CLASS_COMPLETION, 0),
        ];
        for w in order.windows(2) {
            assert!(w[0] < w[1], "{:x} !< {:x}", w[0], w[1]);
        }
    }

    #[test]
    fn the_reading_key_takes_the_earlier_reading_and_a_failure_first() {
        let readings = [0.0, -0.0, 1.0, 1.5, 2.0, 1e300, f64::INFINITY];
        for &fail in &readings {
            for &due in &readings {
                let k = reading_key(fail, due);
                let (reading, is_due) = (f64::from_bits(k >> 1), k & 1 == 1);
                // A failure wins a tie; a negative zero reads as zero.
                let (want, want_due) = if due < fail {
                    (due, true)
                } else {
                    (fail, false)
                };
                assert_eq!(reading, want, "fail {fail}, due {due}");
                assert_eq!(is_due, want_due, "fail {fail}, due {due}");
                assert!(reading.is_sign_positive());
            }
        }
        // Across positions, the least key is the earliest reading, then a
        // failure before a due, whatever the order of the positions.
        let mut rng = stream(99);
        for _ in 0..500 {
            let pos: Vec<(Hours, Hours)> =
                (0..4).map(|_| (time(&mut rng), time(&mut rng))).collect();
            let least = pos.iter().map(|&(f, d)| reading_key(f, d)).min().unwrap();
            let first = pos
                .iter()
                .flat_map(|&(f, d)| [(f, 0u8), (d, 1u8)])
                .min_by(|a, b| a.0.total_cmp(&b.0).then(a.1.cmp(&b.1)))
                .unwrap();
            assert_eq!(f64::from_bits(least >> 1), first.0, "{pos:?}");
            if first.0.is_finite() {
                assert_eq!(least & 1, u64::from(first.1), "{pos:?}");
            }
        }
    }

    #[test]
    fn the_awaited_arrivals_book_knows_the_earliest() {
        for parts in [1usize, 2, 3, 7] {
            let mut rng = stream(100 + parts as u32);
            let mut book = Arrivals::default();
            book.reset(parts);
            let mut at = vec![f64::INFINITY; parts];
            for step in 0..3000 {
                let p = (rng.next_u64() % parts as u64) as usize;
                let t = time(&mut rng);
                book.set(p, t);
                at[p] = t;
                // Plain search: the least time, the lower part on a tie.
                let mut want = (f64::INFINITY, 0);
                for (q, &x) in at.iter().enumerate() {
                    if x < want.0 {
                        want = (x, q);
                    }
                }
                assert_eq!(book.first.0, want.0, "{parts} parts, step {step}");
                if want.0.is_finite() {
                    assert_eq!(book.first.1, want.1, "{parts} parts, step {step}");
                }
            }
        }
    }
}
