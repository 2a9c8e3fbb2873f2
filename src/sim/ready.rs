//! Units up over a trial: from the moments units go down and come up, the
//! hours with exactly `m` units up (fleet-wide and per site) and the hours
//! every site has its ready count.
//!
//! Owns: the log of up and down moments and its one sweep at the end of a
//! trial. The event loop logs a unit going down and coming up. A moment
//! may lie ahead of the loop's clock (work that nothing can interrupt is
//! finished within its demand's event), but never by much, so each moment
//! is put in time order as it is logged (a few steps back at most), and
//! the sweep needs no sort. Moments at or after the horizon do not count.
//! May use: `dist` (hours). No randomness.

use crate::dist::Hours;

/// One change: at `time`, a unit of `site` goes down (`-1`) or comes up (`+1`).
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) struct Change {
    pub time: Hours,
    pub site: u32,
    pub delta: i32,
}

/// Log `c`, keeping the log in time order (of equal times, in the order
/// logged).
#[inline]
pub(super) fn log(changes: &mut Vec<Change>, c: Change) {
    let mut i = changes.len();
    changes.push(c);
    while i > 0 && changes[i - 1].time > c.time {
        changes[i] = changes[i - 1];
        i -= 1;
    }
    changes[i] = c;
}

/// What the sweep fills in.
pub(super) struct Counts<'a> {
    /// Hours with exactly `m` units of the fleet up (length units + 1).
    pub fleet: &'a mut [Hours],
    /// Per site: hours with exactly `m` of its units up (each of length
    /// its units + 1; empty slice of slices to skip).
    pub sites: &'a mut [Vec<Hours>],
    /// Per site: hours with at least its ready count up (empty to skip).
    pub site_ready: &'a mut [Hours],
}

/// Sweep the changes (in time order, as [`log`] keeps them) over
/// `[0, horizon]`, every unit up at time 0.
/// `units` holds each site's unit count, `at_least` each site's ready count
/// (or `None` without a ready-units target). Returns the hours during which
/// every site had its ready count up (0 without a target).
pub(super) fn sweep(
    changes: &[Change],
    horizon: Hours,
    units: &[u32],
    at_least: Option<&[u32]>,
    out: Counts<'_>,
) -> Hours {
    debug_assert!(changes.windows(2).all(|w| w[0].time <= w[1].time));
    let mut up: Vec<u32> = units.to_vec();
    let mut fleet_up: u32 = units.iter().sum();
    // Sites below their ready count.
    let mut short = match at_least {
        Some(k) => up.iter().zip(k).filter(|(u, k)| u < k).count(),
        None => 0,
    };
    let per_site = !out.sites.is_empty();
    let site_ready = !out.site_ready.is_empty();
    // The fleet's books move at every change, a site's only at its own
    // (its count stands still in between), so a change costs the same
    // however many sites there are.
    let (mut ready, mut last) = (0.0, 0.0);
    let mut last_site = vec![0.0; if per_site { units.len() } else { 0 }];
    let mut site_book = |s: usize, to: Hours, up: u32, last_site: &mut [Hours]| {
        let dt = to - last_site[s];
        out.sites[s][up as usize] += dt;
        if site_ready && at_least.is_some_and(|k| up >= k[s]) {
            out.site_ready[s] += dt;
        }
        last_site[s] = to;
    };
    for c in changes {
        if c.time >= horizon {
            break;
        }
        let dt = c.time - last;
        out.fleet[fleet_up as usize] += dt;
        if at_least.is_some() && short == 0 {
            ready += dt;
        }
        last = c.time;
        let s = c.site as usize;
        if per_site {
            site_book(s, c.time, up[s], &mut last_site);
        }
        let before = at_least.is_some_and(|k| up[s] < k[s]);
        if c.delta < 0 {
            up[s] -= 1;
            fleet_up -= 1;
        } else {
            up[s] += 1;
            fleet_up += 1;
        }
        let after = at_least.is_some_and(|k| up[s] < k[s]);
        match (before, after) {
            (false, true) => short += 1,
            (true, false) => short -= 1,
            _ => {}
        }
    }
    out.fleet[fleet_up as usize] += horizon - last;
    if at_least.is_some() && short == 0 {
        ready += horizon - last;
    }
    if per_site {
        for (s, &n) in up.iter().enumerate() {
            site_book(s, horizon, n, &mut last_site);
        }
    }
    ready
}

#[cfg(test)]
mod tests {
    use super::*;

    fn ch(time: Hours, site: u32, delta: i32) -> Change {
        Change { time, site, delta }
    }

    #[test]
    fn hours_by_units_up_add_to_the_horizon_by_hand() {
        // Two sites of 2 and 1 units, horizon 10. Site 0 loses a unit over
        // [2, 5), site 1 its unit over [4, 8) (logged out of order, as the
        // loop may), and site 0 another over [9, 12) past the horizon.
        let mut changes = Vec::new();
        for c in [
            ch(5.0, 0, 1),
            ch(2.0, 0, -1),
            ch(4.0, 1, -1),
            ch(8.0, 1, 1),
            ch(9.0, 0, -1),
            ch(12.0, 0, 1),
        ] {
            log(&mut changes, c);
        }
        let times: Vec<f64> = changes.iter().map(|c| c.time).collect();
        assert_eq!(times, vec![2.0, 4.0, 5.0, 8.0, 9.0, 12.0]);
        let mut fleet = vec![0.0; 4];
        let mut sites = vec![vec![0.0; 3], vec![0.0; 2]];
        let mut site_ready = vec![0.0; 2];
        let ready = sweep(
            &changes,
            10.0,
            &[2, 1],
            Some(&[2, 1]),
            Counts {
                fleet: &mut fleet,
                sites: &mut sites,
                site_ready: &mut site_ready,
            },
        );
        // Fleet: 3 up on [0,2) [8,9): 3 h; 2 up on [2,4) [5,8) [9,10): 6 h;
        // 1 up on [4,5): 1 h.
        assert_eq!(fleet, vec![0.0, 1.0, 6.0, 3.0]);
        // Site 0: 2 up on [0,2) [5,9): 6 h; 1 up on [2,5) [9,10): 4 h.
        assert_eq!(sites[0], vec![0.0, 4.0, 6.0]);
        // Site 1: up except [4, 8).
        assert_eq!(sites[1], vec![4.0, 6.0]);
        assert_eq!(site_ready, vec![6.0, 6.0]);
        // Both at their counts on [0,2) and [8,9).
        assert_eq!(ready, 3.0);
    }
}
