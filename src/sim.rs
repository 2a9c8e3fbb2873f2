//! Event simulation of one trial: the whole fleet over `[0, H]`.
//!
//! Owns: the event loop, the unit and position states, the shared stores and
//! the per-trial bookkeeping of down time, counts and costs, following the
//! rules and conventions of the reference model (see
//! docs/scenario-format.md, "How the simulation reads these fields").
//! May use: `model`, `dist`, `stream`, `outcome`, `uncertainty`. Does no
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

use std::cmp::Reverse;
use std::collections::{BinaryHeap, VecDeque};

use crate::dist::{Hours, Life};
use crate::model::{InitialAge, Model, PartPolicy, Policy, Rule};
use crate::outcome::TrialOutcome;
use crate::stream::{Stream, StreamKey, TrialSeed};

/// Event classes in the order they are handled at the same instant.
const CLASS_COMPLETION: u64 = 0;
const CLASS_ARRIVAL: u64 = 1;
const CLASS_FAILURE: u64 = 2;
const CLASS_DUE: u64 = 3;

/// Down-time causes in priority order (lower wins when causes overlap).
const CAUSE_WAITING: u8 = 0;
const CAUSE_UNPLANNED: u8 = 1;
const CAUSE_PLANNED: u8 = 2;
const CAUSE_NONE: u8 = 3;

/// A scheduled completion or spare arrival (unit events live in
/// [`Tourney`]), packed as one sortable key: `time bits << 64 | tie`, where
/// `tie = class << 56 | id << 16 | position` gives the same-instant order.
/// Times are never negative, so their bit patterns sort as numbers.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord)]
struct Event(u128);

impl Event {
    #[inline]
    fn new(time: Hours, tie: u64) -> Self {
        Event(((time.to_bits() as u128) << 64) | tie as u128)
    }
    #[inline]
    fn time(&self) -> Hours {
        f64::from_bits((self.0 >> 64) as u64)
    }
    #[inline]
    fn tie(&self) -> u64 {
        self.0 as u64
    }
    fn class(&self) -> u64 {
        self.tie() >> 56
    }
    fn id(&self) -> usize {
        ((self.tie() >> 16) & 0xFF_FFFF_FFFF) as usize
    }
    fn position(&self) -> usize {
        (self.tie() & 0xFFFF) as usize
    }
}

fn tie(class: u64, id: usize, position: usize) -> u64 {
    (class << 56) | ((id as u64) << 16) | position as u64
}

/// A tournament tree over the units' next own events (failure, due, hard
/// limit): the earliest is at the root, and changing one unit's next event
/// costs `log2(units)` comparisons with no stale entries. A node holds the
/// winner's key `time bits << 64 | class << 32 | unit`, so ties go to the
/// lower class, then to the lower unit index (times are never negative, so
/// their bit patterns sort as numbers).
#[derive(Debug, Default)]
struct Tourney {
    /// Number of leaves (a power of two); node `n + u` is unit `u`'s leaf.
    n: usize,
    node: Vec<u128>,
}

#[inline]
fn tourney_key(time: Hours, class: u64, unit: usize) -> u128 {
    ((time.to_bits() as u128) << 64) | ((class as u128) << 32) | unit as u128
}

impl Tourney {
    fn reset(&mut self, units: usize) {
        self.n = units.max(1).next_power_of_two();
        self.node.clear();
        self.node.resize(2 * self.n, u128::MAX);
        for u in 0..units {
            self.node[self.n + u] = tourney_key(f64::INFINITY, CLASS_DUE, u);
        }
        for i in (1..self.n).rev() {
            self.node[i] = self.node[2 * i].min(self.node[2 * i + 1]);
        }
    }

    #[inline]
    fn set(&mut self, unit: usize, time: Hours, class: u64) {
        let mut i = self.n + unit;
        self.node[i] = tourney_key(time, class, unit);
        while i > 1 {
            let sibling = self.node[i ^ 1];
            let mine = self.node[i];
            i /= 2;
            self.node[i] = mine.min(sibling);
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
    /// The unit's next own event while it is up: position and reading.
    next_pos: usize,
    next_op: Hours,
}

#[derive(Debug, Clone)]
struct Store {
    on_hand: u32,
    /// Waiting failures (and grounded parts): (unit, position), first come first served.
    failures: VecDeque<(u32, u32)>,
    /// Waiting planned replacements.
    planned: VecDeque<(u32, u32)>,
    /// Time integral of spares on hand, up to `last`.
    area: f64,
    last: Hours,
    leads: Stream,
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
    heap: BinaryHeap<Reverse<Event>>,
    tourney: Tourney,
    /// Per position, derived from its status (kept by `Run::set_status`):
    /// the reading at which it fails (infinite unless working), the reading
    /// of its next due or hard-limit event, and its down-time cause rank.
    fail_at: Vec<Hours>,
    due_at: Vec<Hours>,
    cause: Vec<u8>,
    units: Vec<UnitState>,
    pos: Vec<Pos>,
    stores: Vec<Store>,
    /// Order counters per part type.
    orders: Vec<u64>,
    /// Orders placed and not yet arrived, per part type.
    on_order: Vec<u64>,
    /// The trial's drawn lives per part type (parameter uncertainty).
    trial_lives: Vec<Life>,
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
}

impl<'m> Simulator<'m> {
    /// A simulator of `policy` on `model`, every part type active.
    pub fn new(model: &'m Model, policy: &Policy) -> Self {
        Self::with_parts(model, &policy.parts, ActiveParts::all(model.parts.len()))
    }

    /// A simulator with an explicit per-part policy and active set.
    pub fn with_parts(model: &'m Model, policy: &[PartPolicy], active: ActiveParts) -> Self {
        assert_eq!(policy.len(), model.parts.len(), "one entry per part type");
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
        }
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
        let mut run = Run::start(self, seed, lives, ws, false);
        run.event_loop();
        run.finish()
    }

    /// Like [`Simulator::run`], asserting the model's invariants after every
    /// event (stock identity, hold counts). For tests; panics on a broken one.
    pub fn run_checked(&self, trial: u64, ws: &mut Workspace) -> TrialOutcome {
        let seed = TrialSeed::new(self.model.seed, trial);
        let mut lives = std::mem::take(&mut ws.trial_lives);
        self.trial_lives(&seed, &mut lives);
        let out = {
            let mut run = Run::start(self, &seed, &lives, ws, true);
            run.event_loop();
            run.finish()
        };
        ws.trial_lives = lives;
        out
    }
}

/// One trial in progress.
struct Run<'a, 'm> {
    sim: &'a Simulator<'m>,
    lives: &'a [Life],
    ws: &'a mut Workspace,
    horizon: Hours,
    out: TrialOutcome,
    check: bool,
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

impl<'a, 'm> Run<'a, 'm> {
    fn start(
        sim: &'a Simulator<'m>,
        seed: &TrialSeed,
        lives: &'a [Life],
        ws: &'a mut Workspace,
        check: bool,
    ) -> Self {
        let model = sim.model;
        let n_parts = model.parts.len();
        ws.heap.clear();
        ws.tourney.reset(model.units.len());
        ws.units.clear();
        ws.pos.clear();
        ws.fail_at.clear();
        ws.due_at.clear();
        ws.cause.clear();
        ws.orders.clear();
        ws.orders.resize(n_parts, 0);
        ws.on_order.clear();
        ws.on_order.resize(n_parts, 0);
        ws.stores.truncate(n_parts);
        for (p, pp) in sim.policy.iter().enumerate() {
            let leads = seed.stream(StreamKey::LeadTimes { part: p as u32 });
            if let Some(s) = ws.stores.get_mut(p) {
                s.on_hand = pp.stock;
                s.failures.clear();
                s.planned.clear();
                s.area = 0.0;
                s.last = 0.0;
                s.leads = leads;
            } else {
                ws.stores.push(Store {
                    on_hand: pp.stock,
                    failures: VecDeque::new(),
                    planned: VecDeque::new(),
                    area: 0.0,
                    last: 0.0,
                    leads,
                });
            }
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
                let (fail_op, due_op, limit_op) = if sim.active.is_active(part) {
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
                ws.fail_at.push(fail_op);
                ws.due_at.push(due_op.min(limit_op));
                ws.cause.push(CAUSE_NONE);
            }
            ws.units.push(UnitState {
                op: 0.0,
                last: 0.0,
                first_pos: first,
                n_pos: unit.parts.len(),
                holding_down: 0,
                next_pos: 0,
                next_op: f64::INFINITY,
            });
        }
        let out = TrialOutcome::zeroed(n_parts);
        let mut run = Run {
            sim,
            lives,
            ws,
            horizon: model.horizon,
            out,
            check,
        };
        for u in 0..run.ws.units.len() {
            run.schedule_unit(u, 0.0);
        }
        run
    }

    /// Change a position's status and the figures derived from it.
    #[inline]
    fn set_status(&mut self, idx: usize, status: Status) {
        let p = &mut self.ws.pos[idx];
        p.status = status;
        let (fail, due, cause) = match status {
            Status::Working => (p.fail_op, p.due_op.min(p.limit_op), CAUSE_NONE),
            Status::WaitingPlanned => (p.fail_op, p.limit_op, CAUSE_NONE),
            Status::Failed | Status::Grounded => (f64::INFINITY, f64::INFINITY, CAUSE_WAITING),
            Status::Replacing { planned: false } => (f64::INFINITY, f64::INFINITY, CAUSE_UNPLANNED),
            Status::Replacing { planned: true } => (f64::INFINITY, f64::INFINITY, CAUSE_PLANNED),
        };
        self.ws.fail_at[idx] = fail;
        self.ws.due_at[idx] = due;
        self.ws.cause[idx] = cause;
    }

    /// Set the unit's next own event (failure, due, hard limit); none while
    /// it is down.
    fn schedule_unit(&mut self, u: usize, now: Hours) {
        let unit = &self.ws.units[u];
        if unit.holding_down > 0 {
            self.ws.tourney.set(u, f64::INFINITY, CLASS_DUE);
            return;
        }
        let (first, n) = (unit.first_pos, unit.n_pos);
        let mut best_op = f64::INFINITY;
        let mut best_class = CLASS_DUE;
        let mut best_j = 0;
        // Failures before dues at the same reading; lower positions first.
        for (j, &f) in self.ws.fail_at[first..first + n].iter().enumerate() {
            if f < best_op {
                best_op = f;
                best_class = CLASS_FAILURE;
                best_j = j;
            }
        }
        for (j, &d) in self.ws.due_at[first..first + n].iter().enumerate() {
            if d < best_op {
                best_op = d;
                best_class = CLASS_DUE;
                best_j = j;
            }
        }
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
            let mut rank = CAUSE_NONE;
            let mut at = first;
            for (j, &c) in self.ws.cause[first..first + n].iter().enumerate() {
                if c < rank {
                    rank = c;
                    at = first + j;
                }
            }
            if rank != CAUSE_NONE {
                match rank {
                    CAUSE_WAITING => self.out.down_waiting += dt,
                    CAUSE_UNPLANNED => self.out.down_unplanned += dt,
                    _ => self.out.down_planned += dt,
                }
                let part = self.ws.pos[at].part;
                self.out.parts[part].down_hours += dt;
            }
        }
        self.ws.units[u].last = now;
    }

    fn touch_store(&mut self, part: usize, now: Hours) {
        let s = &mut self.ws.stores[part];
        s.area += s.on_hand as f64 * (now - s.last);
        s.last = now;
    }

    /// A unit goes from up to down or gains another reason to stay down.
    fn hold_down(&mut self, u: usize) {
        let unit = &mut self.ws.units[u];
        // The unit's entry in the tournament is left as it is; a stale entry
        // that reaches the top is discarded there (lazy deletion), and one
        // that does not is overwritten when the unit comes up again.
        unit.holding_down += 1;
    }

    fn release(&mut self, u: usize, now: Hours) {
        let unit = &mut self.ws.units[u];
        unit.holding_down -= 1;
        if unit.holding_down == 0 {
            self.schedule_unit(u, now);
        }
    }

    /// Place one resupply order for `part` at `now`.
    fn order(&mut self, part: usize, now: Hours) {
        let k = self.ws.orders[part];
        self.ws.orders[part] += 1;
        self.ws.on_order[part] += 1;
        let lead = self.sim.model.parts[part]
            .lead_time
            .sample(&mut self.ws.stores[part].leads);
        let po = &mut self.out.parts[part];
        po.orders += 1;
        po.parts_cost += self.sim.model.parts[part].price;
        let time = now + lead;
        if time < self.horizon {
            let t = tie(CLASS_ARRIVAL, part, (k & 0xFFFF) as usize);
            self.ws.heap.push(Reverse(Event::new(time, t)));
        }
    }

    /// Take a spare for position `idx` of unit `u` and start the work.
    fn start_replacement(&mut self, u: usize, j: usize, planned: bool, now: Hours) {
        let idx = self.ws.units[u].first_pos + j;
        let part = self.ws.pos[idx].part;
        let pt = &self.sim.model.parts[part];
        self.set_status(idx, Status::Replacing { planned });
        let po = &mut self.out.parts[part];
        let duration = if planned {
            po.planned += 1;
            po.labour_planned += pt.labour_planned;
            pt.duration_planned
        } else {
            po.labour_unplanned += pt.labour_unplanned;
            pt.duration_unplanned
        };
        let time = now + duration;
        if time < self.horizon {
            self.ws
                .heap
                .push(Reverse(Event::new(time, tie(CLASS_COMPLETION, u, j))));
        }
    }

    fn event_loop(&mut self) {
        loop {
            if self.check {
                self.check_invariants();
            }
            let (ut, uclass, u) = self.ws.tourney.top();
            // A completion or arrival at the same instant comes before any
            // unit event (its class is lower).
            let take_heap = match self.ws.heap.peek() {
                Some(Reverse(ev)) => ev.time() <= ut,
                None => false,
            };
            self.out.events += 1;
            if take_heap {
                let Some(Reverse(ev)) = self.ws.heap.pop() else {
                    break;
                };
                if ev.class() == CLASS_COMPLETION {
                    self.on_completion(ev.id(), ev.position(), ev.time());
                } else {
                    self.on_arrival(ev.id(), ev.time());
                }
                continue;
            }
            if !ut.is_finite() {
                self.out.events -= 1;
                break;
            }
            if self.ws.units[u].holding_down > 0 {
                // Stale: the unit went down after this event was set.
                self.out.events -= 1;
                self.ws.tourney.set(u, f64::INFINITY, CLASS_DUE);
                continue;
            }
            self.advance_unit(u, ut);
            // Snap the clock to the event's reading (no rounding drift).
            let (j, op) = (self.ws.units[u].next_pos, self.ws.units[u].next_op);
            self.ws.units[u].op = op;
            if uclass == CLASS_FAILURE {
                self.on_failure(u, j, ut);
            } else {
                self.on_due(u, j, ut);
            }
        }
        if self.check {
            self.check_invariants();
        }
    }

    /// Assert the model's invariants (used by tests through `run_checked`).
    fn check_invariants(&self) {
        for (p, s) in self.ws.stores.iter().enumerate() {
            let waiting = (s.failures.len() + s.planned.len()) as i64;
            let lhs = s.on_hand as i64 + self.ws.on_order[p] as i64 - waiting;
            assert_eq!(lhs, self.sim.policy[p].stock as i64, "stock identity");
            assert!(
                s.on_hand == 0 || waiting == 0,
                "spare on the shelf while demands wait"
            );
        }
        for unit in &self.ws.units {
            let held = (0..unit.n_pos)
                .filter(|&j| {
                    matches!(
                        self.ws.pos[unit.first_pos + j].status,
                        Status::Failed | Status::Grounded | Status::Replacing { .. }
                    )
                })
                .count() as u32;
            assert_eq!(held, unit.holding_down, "hold count");
        }
    }

    fn on_failure(&mut self, u: usize, j: usize, now: Hours) {
        let idx = self.ws.units[u].first_pos + j;
        let part = self.ws.pos[idx].part;
        self.out.parts[part].failures += 1;
        let was = self.ws.pos[idx].status;
        self.hold_down(u);
        if was == Status::WaitingPlanned {
            // The waiting planned demand becomes a failure: no new order, no
            // second stock-out; it joins the waiting failures now.
            let store = &mut self.ws.stores[part];
            store
                .planned
                .retain(|&(a, b)| (a as usize, b as usize) != (u, j));
            store.failures.push_back((u as u32, j as u32));
            self.set_status(idx, Status::Failed);
            return;
        }
        self.order(part, now);
        if self.ws.stores[part].on_hand > 0 {
            self.touch_store(part, now);
            self.ws.stores[part].on_hand -= 1;
            self.start_replacement(u, j, false, now);
        } else {
            self.out.parts[part].stockouts += 1;
            self.set_status(idx, Status::Failed);
            self.ws.stores[part]
                .failures
                .push_back((u as u32, j as u32));
        }
    }

    fn on_due(&mut self, u: usize, j: usize, now: Hours) {
        let idx = self.ws.units[u].first_pos + j;
        let part = self.ws.pos[idx].part;
        if self.ws.pos[idx].status == Status::WaitingPlanned {
            // A safety-critical part reached its hard limit while waiting:
            // the unit is held down until a spare comes.
            let store = &mut self.ws.stores[part];
            store
                .planned
                .retain(|&(a, b)| (a as usize, b as usize) != (u, j));
            store.failures.push_back((u as u32, j as u32));
            self.set_status(idx, Status::Grounded);
            self.hold_down(u);
            return;
        }
        self.order(part, now);
        if self.ws.stores[part].on_hand > 0 {
            self.touch_store(part, now);
            self.ws.stores[part].on_hand -= 1;
            self.hold_down(u);
            self.start_replacement(u, j, true, now);
        } else {
            self.out.parts[part].stockouts += 1;
            self.set_status(idx, Status::WaitingPlanned);
            self.ws.stores[part].planned.push_back((u as u32, j as u32));
            self.schedule_unit(u, now);
        }
    }

    fn on_completion(&mut self, u: usize, j: usize, now: Hours) {
        self.advance_unit(u, now);
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
        self.release(u, now);
    }

    fn on_arrival(&mut self, part: usize, now: Hours) {
        self.touch_store(part, now);
        self.ws.on_order[part] -= 1;
        let store = &mut self.ws.stores[part];
        if let Some((u, j)) = store.failures.pop_front() {
            let (u, j) = (u as usize, j as usize);
            self.advance_unit(u, now);
            let idx = self.ws.units[u].first_pos + j;
            let planned = self.ws.pos[idx].status == Status::Grounded;
            // The unit is already held down by this position; the hold passes
            // from waiting to the replacement work.
            self.start_replacement(u, j, planned, now);
        } else if let Some((u, j)) = store.planned.pop_front() {
            let (u, j) = (u as usize, j as usize);
            self.advance_unit(u, now);
            self.hold_down(u);
            self.start_replacement(u, j, true, now);
        } else {
            store.on_hand += 1;
        }
    }

    fn finish(mut self) -> TrialOutcome {
        let h = self.horizon;
        for u in 0..self.ws.units.len() {
            self.advance_unit(u, h);
        }
        let model = self.sim.model;
        for p in 0..model.parts.len() {
            self.touch_store(p, h);
            let pt = &model.parts[p];
            let po = &mut self.out.parts[p];
            po.holding = self.ws.stores[p].area * pt.holding_per_hour;
            po.downtime_cost = po.down_hours * model.downtime_penalty;
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
        self.out
    }
}
