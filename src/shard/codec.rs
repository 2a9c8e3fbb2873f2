//! One trial's record in a shard file: a lossless, compact encoding of a
//! [`TrialOutcome`].

use std::io::Read;

use super::header::{CodecRecord, bits, unbits};
use crate::model::Model;
use crate::outcome::{PartOutcome, SiteOutcome, TrialOutcome};

/// Encodes and decodes per-trial outcomes of one model.
#[derive(Debug, Clone, PartialEq)]
pub struct Codec {
    unit_hours: f64,
    penalty: f64,
    /// Per part type: price, planned labour, unplanned labour.
    parts: Vec<[f64; 3]>,
    /// Per part type: holding cost per spare-hour.
    holding: Vec<f64>,
    /// Years of the money books (0 without `[money]`).
    years: usize,
}

const T_AVAIL_RAW: u8 = 1;
const T_UP_ZERO: u8 = 2;
const T_WAIT_ZERO: u8 = 4;
const T_UNPL_ZERO: u8 = 8;
const T_PLAN_ZERO: u8 = 16;
/// The fleet's hours by units up follow.
const T_UNITS_UP: u8 = 32;
/// The readiness follows.
const T_READY: u8 = 64;
/// Per-site figures follow.
const T_SITES: u8 = 128;

const P_DOWN_ZERO: u8 = 1;
const P_HOLD_ZERO: u8 = 2;
const P_COST_RAW: u8 = 4;
const P_LP_RAW: u8 = 8;
const P_LU_RAW: u8 = 16;
const P_DT_RAW: u8 = 32;
const P_BACK_ZERO: u8 = 64;
/// The rotable, depot and lateral figures follow.
const P_NET: u8 = 128;

/// `c` added to 0 `n` times, as the simulator adds it once per event.
fn repeated_sum(c: f64, n: u64) -> f64 {
    if n == 0 || c == 0.0 {
        return 0.0;
    }
    // A whole number whose multiples up to n c stay below 2^53: every
    // partial sum is exact, so the sum is the exact product.
    if c.fract() == 0.0 && c.abs() * (n as f64) <= 9_007_199_254_740_992.0 {
        return c * n as f64;
    }
    let mut s = 0.0;
    for _ in 0..n {
        s += c;
    }
    s
}

fn same(a: f64, b: f64) -> bool {
    a.to_bits() == b.to_bits()
}

/// The count `n` with `repeated_sum(c, n) == x` exactly, if there is one
/// near `x / c`.
fn count_of(x: f64, c: f64) -> Option<u64> {
    if same(x, 0.0) {
        return Some(0);
    }
    if c == 0.0 || !c.is_finite() || !x.is_finite() {
        return None;
    }
    let guess = (x / c).round();
    if !(0.0..4.0e9).contains(&guess) {
        return None;
    }
    let g = guess as u64;
    [g, g.saturating_sub(1), g + 1]
        .into_iter()
        .find(|&n| same(repeated_sum(c, n), x))
}

fn availability_of(up: f64, unit_hours: f64) -> f64 {
    // The simulator's own arithmetic (`sim::Run::finish`).
    if unit_hours > 0.0 {
        up / unit_hours
    } else {
        1.0
    }
}

fn put_varint(out: &mut Vec<u8>, mut x: u64) {
    while x >= 0x80 {
        out.push((x as u8) | 0x80);
        x >>= 7;
    }
    out.push(x as u8);
}

fn put_f64(out: &mut Vec<u8>, x: f64) {
    out.extend_from_slice(&x.to_le_bytes());
}

/// A part type's rotable, depot and lateral figures: counts, then hours
/// and money (and two slots for a holding cost not rebuilt from the shelf
/// hours: the figure, and 1 to say it is there).
fn net_fields(p: &PartOutcome) -> ([u32; 6], [f64; 8]) {
    (
        [
            p.repairs,
            p.condemned,
            p.repair_entries,
            p.requests,
            p.shipments,
            p.laterals,
        ],
        [
            p.repair_planned,
            p.repair_failed,
            p.transport_cost,
            p.repair_hours,
            p.turnaround_hours,
            p.depot_backorder_hours,
            0.0,
            0.0,
        ],
    )
}

/// Up to eight numbers: a byte saying which are not zero, then those.
fn put_floats(out: &mut Vec<u8>, xs: &[f64]) {
    debug_assert!(xs.len() <= 8);
    let mask = xs
        .iter()
        .enumerate()
        .filter(|(_, x)| !same(**x, 0.0))
        .fold(0u8, |m, (i, _)| m | (1 << i));
    out.push(mask);
    for x in xs.iter().filter(|x| !same(**x, 0.0)) {
        put_f64(out, *x);
    }
}

/// Hours by a count (units up): the length, the entries not zero, then
/// each as its index and value.
fn put_hours_by_count(out: &mut Vec<u8>, hours: &[f64]) {
    put_varint(out, hours.len() as u64);
    let nonzero = hours.iter().filter(|x| !same(**x, 0.0)).count();
    put_varint(out, nonzero as u64);
    for (i, x) in hours.iter().enumerate().filter(|(_, x)| !same(**x, 0.0)) {
        put_varint(out, i as u64);
        put_f64(out, *x);
    }
}

/// A byte source that counts what it consumed.
pub(super) struct Bytes<R> {
    pub(super) inner: R,
    pub(super) read: u64,
}

impl<R: Read> Bytes<R> {
    fn u8(&mut self) -> std::io::Result<u8> {
        let mut b = [0u8; 1];
        self.inner.read_exact(&mut b)?;
        self.read += 1;
        Ok(b[0])
    }
    fn f64(&mut self) -> std::io::Result<f64> {
        let mut b = [0u8; 8];
        self.inner.read_exact(&mut b)?;
        self.read += 8;
        Ok(f64::from_le_bytes(b))
    }
    fn varint(&mut self) -> std::io::Result<u64> {
        let mut x = 0u64;
        for shift in (0..64).step_by(7) {
            let b = self.u8()?;
            x |= u64::from(b & 0x7f) << shift;
            if b & 0x80 == 0 {
                return Ok(x);
            }
        }
        Err(std::io::Error::new(
            std::io::ErrorKind::InvalidData,
            "a count longer than 64 bits",
        ))
    }
    fn floats(&mut self, xs: &mut [f64]) -> std::io::Result<()> {
        let mask = self.u8()?;
        for (i, x) in xs.iter_mut().enumerate() {
            *x = if mask & (1 << i) != 0 {
                self.f64()?
            } else {
                0.0
            };
        }
        Ok(())
    }

    fn hours_by_count(&mut self) -> std::io::Result<Vec<f64>> {
        let bad = |why: &str| std::io::Error::new(std::io::ErrorKind::InvalidData, why.to_string());
        let len = self.varint()?;
        let nonzero = self.varint()?;
        if len > 1 << 24 || nonzero > len {
            return Err(bad("a units-up count out of range"));
        }
        let mut v = vec![0.0; len as usize];
        for _ in 0..nonzero {
            let i = self.varint()?;
            let slot = v
                .get_mut(i as usize)
                .ok_or_else(|| bad("a units-up index out of range"))?;
            *slot = self.f64()?;
        }
        Ok(v)
    }

    fn count(&mut self) -> std::io::Result<u32> {
        u32::try_from(self.varint()?)
            .map_err(|_| std::io::Error::new(std::io::ErrorKind::InvalidData, "a count past 2^32"))
    }
}

impl Codec {
    /// The codec of `model`.
    pub fn new(model: &Model) -> Self {
        Codec {
            unit_hours: model.units.len() as f64 * model.horizon,
            penalty: model.downtime_penalty,
            parts: model
                .parts
                .iter()
                .map(|p| [p.price, p.labour_planned, p.labour_unplanned])
                .collect(),
            holding: model.parts.iter().map(|p| p.holding_per_hour).collect(),
            years: model.money.as_ref().map_or(0, |m| m.years(model.horizon)),
        }
    }

    pub(super) fn record(&self) -> CodecRecord {
        CodecRecord {
            unit_hours: bits(self.unit_hours),
            penalty: bits(self.penalty),
            parts: self
                .parts
                .iter()
                .map(|[a, b, c]| [bits(*a), bits(*b), bits(*c)])
                .collect(),
            holding: self.holding.iter().map(|h| bits(*h)).collect(),
            years: self.years as u64,
        }
    }

    pub(super) fn from_record(r: &CodecRecord) -> Option<Self> {
        let mut parts = Vec::with_capacity(r.parts.len());
        for [a, b, c] in &r.parts {
            parts.push([unbits(a)?, unbits(b)?, unbits(c)?]);
        }
        if r.holding.len() != parts.len() || r.years > 1_000_000 {
            return None;
        }
        Some(Codec {
            unit_hours: unbits(&r.unit_hours)?,
            penalty: unbits(&r.penalty)?,
            parts,
            holding: r.holding.iter().map(|h| unbits(h)).collect::<Option<_>>()?,
            years: r.years as usize,
        })
    }

    /// Append the record of `o` to `out`.
    ///
    /// # Panics
    /// When `o` has another number of part types than the model (a bug).
    pub fn encode(&self, o: &TrialOutcome, out: &mut Vec<u8>) {
        assert_eq!(o.parts.len(), self.parts.len(), "one entry per part type");
        let mut tag = 0u8;
        if !same(availability_of(o.up_hours, self.unit_hours), o.availability) {
            tag |= T_AVAIL_RAW;
        }
        for (x, flag) in [
            (o.up_hours, T_UP_ZERO),
            (o.down_waiting, T_WAIT_ZERO),
            (o.down_unplanned, T_UNPL_ZERO),
            (o.down_planned, T_PLAN_ZERO),
        ] {
            if same(x, 0.0) {
                tag |= flag;
            }
        }
        if !o.units_up.is_empty() {
            tag |= T_UNITS_UP;
        }
        if !same(o.readiness, 0.0) {
            tag |= T_READY;
        }
        if !o.sites.is_empty() {
            tag |= T_SITES;
        }
        out.push(tag);
        if tag & T_AVAIL_RAW != 0 {
            put_f64(out, o.availability);
        }
        for (x, flag) in [
            (o.up_hours, T_UP_ZERO),
            (o.down_waiting, T_WAIT_ZERO),
            (o.down_unplanned, T_UNPL_ZERO),
            (o.down_planned, T_PLAN_ZERO),
        ] {
            if tag & flag == 0 {
                put_f64(out, x);
            }
        }
        put_varint(out, o.events);
        for ((p, &[price, lp, lu]), &rate) in o.parts.iter().zip(&self.parts).zip(&self.holding) {
            let mut tag = 0u8;
            if same(p.down_hours, 0.0) {
                tag |= P_DOWN_ZERO;
            }
            if same(p.shelf_hours, 0.0) {
                tag |= P_HOLD_ZERO;
            }
            if same(p.backorder_hours, 0.0) {
                tag |= P_BACK_ZERO;
            }
            let mut net = net_fields(p);
            // The simulator's holding is its shelf hours times the rate;
            // were it not, the raw figure goes with the network fields.
            if !same(p.shelf_hours * rate, p.holding) {
                net.1[6] = p.holding;
                net.1[7] = 1.0;
            }
            if net.0.iter().any(|&c| c != 0) || net.1.iter().any(|&x| !same(x, 0.0)) {
                tag |= P_NET;
            }
            if !same(repeated_sum(price, u64::from(p.orders)), p.parts_cost) {
                tag |= P_COST_RAW;
            }
            if !same(repeated_sum(lp, u64::from(p.planned)), p.labour_planned) {
                tag |= P_LP_RAW;
            }
            let unplanned = count_of(p.labour_unplanned, lu);
            if unplanned.is_none() {
                tag |= P_LU_RAW;
            }
            if !same(p.down_hours * self.penalty, p.downtime_cost) {
                tag |= P_DT_RAW;
            }
            out.push(tag);
            put_varint(out, u64::from(p.failures));
            put_varint(out, u64::from(p.planned));
            put_varint(out, u64::from(p.stockouts));
            put_varint(out, u64::from(p.orders));
            if let Some(n) = unplanned {
                put_varint(out, n);
            }
            if tag & P_DOWN_ZERO == 0 {
                put_f64(out, p.down_hours);
            }
            if tag & P_HOLD_ZERO == 0 {
                put_f64(out, p.shelf_hours);
            }
            if tag & P_BACK_ZERO == 0 {
                put_f64(out, p.backorder_hours);
            }
            if tag & P_NET != 0 {
                for c in net.0 {
                    put_varint(out, u64::from(c));
                }
                put_floats(out, &net.1);
            }
            for (flag, x) in [
                (P_COST_RAW, p.parts_cost),
                (P_LP_RAW, p.labour_planned),
                (P_LU_RAW, p.labour_unplanned),
                (P_DT_RAW, p.downtime_cost),
            ] {
                if tag & flag != 0 {
                    put_f64(out, x);
                }
            }
        }
        if tag & T_UNITS_UP != 0 {
            put_hours_by_count(out, &o.units_up);
        }
        if tag & T_READY != 0 {
            put_f64(out, o.readiness);
        }
        if tag & T_SITES != 0 {
            put_varint(out, o.sites.len() as u64);
            for site in &o.sites {
                put_floats(
                    out,
                    &[site.up_hours, site.ready_hours, site.backorder_hours],
                );
                for c in [site.stockouts, site.laterals_given, site.laterals_taken] {
                    put_varint(out, u64::from(c));
                }
                put_hours_by_count(out, &site.units_up);
            }
        }
        self.encode_books(o, out);
    }

    /// The yearly books that end a record (format 3).
    fn encode_books(&self, o: &TrialOutcome, out: &mut Vec<u8>) {
        for p in &o.parts {
            put_varint(out, u64::from(p.demands));
            put_varint(out, u64::from(p.stockout_years));
        }
        if self.years == 0 {
            return;
        }
        assert_eq!(
            o.year_spend.len(),
            self.years * self.parts.len(),
            "one yearly spend per year and part type"
        );
        let pv: Vec<f64> = o.parts.iter().map(|p| p.pv_spend).collect();
        for chunk in pv.chunks(8).chain(o.year_spend.chunks(8)) {
            put_floats(out, chunk);
        }
    }

    /// Read the yearly books into `o` (its part types already read).
    fn decode_books<R: Read>(&self, r: &mut Bytes<R>, o: &mut TrialOutcome) -> std::io::Result<()> {
        for p in &mut o.parts {
            p.demands = r.count()?;
            p.stockout_years = r.count()?;
        }
        if self.years == 0 {
            return Ok(());
        }
        let mut pv = vec![0.0; o.parts.len()];
        for chunk in pv.chunks_mut(8) {
            r.floats(chunk)?;
        }
        for (p, x) in o.parts.iter_mut().zip(pv) {
            p.pv_spend = x;
        }
        o.year_spend = vec![0.0; self.years * self.parts.len()];
        for chunk in o.year_spend.chunks_mut(8) {
            r.floats(chunk)?;
        }
        Ok(())
    }

    pub(super) fn decode<R: Read>(&self, r: &mut Bytes<R>) -> std::io::Result<TrialOutcome> {
        let tag = r.u8()?;
        let avail_raw = if tag & T_AVAIL_RAW != 0 {
            Some(r.f64()?)
        } else {
            None
        };
        let mut vals = [0.0f64; 4];
        for (v, flag) in vals
            .iter_mut()
            .zip([T_UP_ZERO, T_WAIT_ZERO, T_UNPL_ZERO, T_PLAN_ZERO])
        {
            if tag & flag == 0 {
                *v = r.f64()?;
            }
        }
        let [up_hours, down_waiting, down_unplanned, down_planned] = vals;
        let events = r.varint()?;
        let mut parts = Vec::with_capacity(self.parts.len());
        for (&[price, lp, lu], &rate) in self.parts.iter().zip(&self.holding) {
            let tag = r.u8()?;
            let failures = r.count()?;
            let planned = r.count()?;
            let stockouts = r.count()?;
            let orders = r.count()?;
            let unplanned = if tag & P_LU_RAW == 0 {
                Some(r.count()?)
            } else {
                None
            };
            let down_hours = if tag & P_DOWN_ZERO == 0 {
                r.f64()?
            } else {
                0.0
            };
            let shelf_hours = if tag & P_HOLD_ZERO == 0 {
                r.f64()?
            } else {
                0.0
            };
            let backorder_hours = if tag & P_BACK_ZERO == 0 {
                r.f64()?
            } else {
                0.0
            };
            let (mut counts, mut floats) = ([0u32; 6], [0.0f64; 8]);
            if tag & P_NET != 0 {
                for c in &mut counts {
                    *c = r.count()?;
                }
                r.floats(&mut floats)?;
            }
            let parts_cost = if tag & P_COST_RAW != 0 {
                r.f64()?
            } else {
                repeated_sum(price, u64::from(orders))
            };
            let labour_planned = if tag & P_LP_RAW != 0 {
                r.f64()?
            } else {
                repeated_sum(lp, u64::from(planned))
            };
            let labour_unplanned = match unplanned {
                Some(n) => repeated_sum(lu, u64::from(n)),
                None => r.f64()?,
            };
            let downtime_cost = if tag & P_DT_RAW != 0 {
                r.f64()?
            } else {
                down_hours * self.penalty
            };
            let [
                repairs,
                condemned,
                repair_entries,
                requests,
                shipments,
                laterals,
            ] = counts;
            let [
                repair_planned,
                repair_failed,
                transport_cost,
                repair_hours,
                turnaround_hours,
                depot_backorder_hours,
                holding_raw,
                raw,
            ] = floats;
            parts.push(PartOutcome {
                failures,
                planned,
                stockouts,
                orders,
                down_hours,
                parts_cost,
                labour_planned,
                labour_unplanned,
                downtime_cost,
                holding: if raw != 0.0 {
                    holding_raw
                } else {
                    shelf_hours * rate
                },
                repairs,
                condemned,
                repair_entries,
                requests,
                shipments,
                laterals,
                repair_planned,
                repair_failed,
                transport_cost,
                repair_hours,
                turnaround_hours,
                backorder_hours,
                depot_backorder_hours,
                shelf_hours,
                ..PartOutcome::default()
            });
        }
        let units_up = if tag & T_UNITS_UP != 0 {
            r.hours_by_count()?
        } else {
            Vec::new()
        };
        let readiness = if tag & T_READY != 0 { r.f64()? } else { 0.0 };
        let mut sites = Vec::new();
        if tag & T_SITES != 0 {
            let n = r.varint()?;
            if n > 1 << 20 {
                return Err(std::io::Error::new(
                    std::io::ErrorKind::InvalidData,
                    "too many sites",
                ));
            }
            for _ in 0..n {
                let mut f = [0.0; 3];
                r.floats(&mut f)?;
                let (stockouts, laterals_given, laterals_taken) =
                    (r.count()?, r.count()?, r.count()?);
                sites.push(SiteOutcome {
                    up_hours: f[0],
                    stockouts,
                    laterals_given,
                    laterals_taken,
                    ready_hours: f[1],
                    backorder_hours: f[2],
                    units_up: r.hours_by_count()?,
                });
            }
        }
        let mut o = TrialOutcome {
            availability: avail_raw.unwrap_or_else(|| availability_of(up_hours, self.unit_hours)),
            up_hours,
            down_waiting,
            down_unplanned,
            down_planned,
            parts,
            events,
            readiness,
            units_up,
            sites,
            year_spend: Vec::new(),
        };
        self.decode_books(r, &mut o)?;
        Ok(o)
    }

    /// Decode one record from `bytes` (for tests and tools); returns the
    /// outcome and the bytes it took.
    ///
    /// # Errors
    /// When the bytes end early or hold an impossible count.
    pub fn decode_slice(&self, bytes: &[u8]) -> std::io::Result<(TrialOutcome, usize)> {
        let mut r = Bytes {
            inner: bytes,
            read: 0,
        };
        let o = self.decode(&mut r)?;
        Ok((o, r.read as usize))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn whole_number_sums_take_the_short_way_exactly() {
        // The product shortcut must give the loop's bits.
        for c in [1.0, 3.0, 180_000.0, 1e15, 4_503_599_627_370_497.0] {
            for n in [0u64, 1, 2, 7, 1000, 4096] {
                let mut s = 0.0;
                for _ in 0..n {
                    s += c;
                }
                assert_eq!(repeated_sum(c, n).to_bits(), s.to_bits(), "{c} x {n}");
            }
        }
        assert_eq!(repeated_sum(-0.0, 3).to_bits(), 0f64.to_bits());
    }

    #[test]
    fn varints_round_trip() {
        for x in [
            0u64,
            1,
            127,
            128,
            300,
            16_383,
            16_384,
            u32::MAX as u64,
            u64::MAX,
        ] {
            let mut v = Vec::new();
            put_varint(&mut v, x);
            let mut r = Bytes {
                inner: &v[..],
                read: 0,
            };
            assert_eq!(r.varint().unwrap(), x);
            assert_eq!(r.read as usize, v.len());
        }
    }

    #[test]
    fn count_of_finds_the_exact_count() {
        // 0.1 added 10 times is 0.9999999999999999, not 1.0 (IEEE-754
        // double rounding; Goldberg 1991, "What every computer scientist
        // should know about floating-point arithmetic"): the count must be
        // found from the repeated sum, not from a product.
        let s = repeated_sum(0.1, 10);
        assert_ne!(s, 1.0);
        assert_eq!(count_of(s, 0.1), Some(10));
        assert_eq!(count_of(0.0, 7.0), Some(0));
        assert_eq!(count_of(1.0, 0.1), None);
        assert_eq!(count_of(5.0, 0.0), None);
    }

    #[test]
    fn hand_made_outcomes_round_trip_bit_for_bit() {
        let codec = Codec {
            unit_hours: 3.0 * 1000.0,
            penalty: 0.3,
            parts: vec![[0.1, 7.0, 3.3], [1e300, 0.0, f64::MIN_POSITIVE]],
            holding: vec![0.25, 3.0],
            years: 5,
        };
        let mut o = TrialOutcome::zeroed(2);
        // Ten yearly figures: more than one group of eight, zeros among them.
        o.year_spend = vec![1.5, 0.0, 2.25, -0.0, 1e9, 3.0, 0.0, 7.0, 0.1, 4.0];
        o.up_hours = 2900.123;
        o.availability = availability_of(o.up_hours, 3000.0);
        o.down_waiting = 0.5;
        o.down_planned = -0.0;
        o.events = 123_456_789;
        o.parts[0] = PartOutcome {
            failures: 3,
            planned: 2,
            stockouts: 1,
            orders: 5,
            down_hours: 12.25,
            parts_cost: repeated_sum(0.1, 5),
            labour_planned: 14.0,
            labour_unplanned: repeated_sum(3.3, 3),
            downtime_cost: 12.25 * 0.3,
            shelf_hours: 4.0 / 3.0,
            holding: 4.0 / 3.0 * 0.25,
            backorder_hours: 2.5,
            demands: 6,
            stockout_years: 2,
            pv_spend: 19.75,
            ..PartOutcome::default()
        };
        // A part whose figures do not come from the simulator's arithmetic:
        // stored raw.
        o.parts[1] = PartOutcome {
            failures: u32::MAX,
            planned: 0,
            stockouts: 0,
            orders: 1,
            down_hours: f64::NAN,
            parts_cost: 2.0,
            labour_planned: 1.0,
            labour_unplanned: 0.5,
            downtime_cost: 7.0,
            holding: 0.0,
            shelf_hours: 5.0,
            repairs: 4,
            condemned: 1,
            repair_entries: 5,
            requests: 9,
            shipments: 8,
            laterals: 1,
            repair_planned: 100.0,
            transport_cost: -0.0,
            turnaround_hours: 1e-300,
            depot_backorder_hours: 17.5,
            ..PartOutcome::default()
        };
        o.readiness = 0.875;
        o.units_up = vec![0.0, 0.0, 250.0, 0.0, 2750.0];
        o.sites = vec![
            SiteOutcome {
                up_hours: 1900.0,
                stockouts: 3,
                laterals_given: 0,
                laterals_taken: 1,
                ready_hours: 1000.0,
                backorder_hours: 12.5,
                units_up: vec![10.0, 0.0, 990.0],
            },
            SiteOutcome::default(),
        ];
        let mut v = Vec::new();
        codec.encode(&o, &mut v);
        let (back, used) = codec.decode_slice(&v).unwrap();
        assert_eq!(used, v.len());
        // Bit for bit, NaN and -0.0 included (PartialEq would fail on NaN).
        assert_eq!(format!("{back:?}"), format!("{o:?}"));
        assert_eq!(back.down_planned.to_bits(), (-0.0f64).to_bits());
        assert_eq!(back.availability.to_bits(), o.availability.to_bits());
        // Cut short anywhere: an error, never a panic.
        for cut in 0..v.len() {
            assert!(codec.decode_slice(&v[..cut]).is_err());
        }
    }
}
