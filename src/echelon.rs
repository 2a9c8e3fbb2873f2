//! The two-echelon spares model (a depot above sites) and the repair-shop
//! queues, in closed form or by exact numerics.
//!
//! Owns: for one part type, the depot and site pipelines of METRIC
//! (Sherbrooke 1968) and VARI-METRIC (Sherbrooke 1986; Graves 1985), the
//! two-moment negative binomial for site backorders, Graves' exact site
//! distribution for Poisson demand and fixed times, and the marginal
//! analysis of stock over the depot and the sites; the site and depot
//! measures the frontier's search over sites ranks its candidates by;
//! the M/M/c repair shop (Erlang C) and the finite-source machine-repair
//! model with spares: its generator, stationary distribution and transient
//! time-average from "all new" by uniformization.
//! May use: `analytic` (the Poisson pipeline), `dist` (the `Hours` unit) and
//! `statrs` special functions. No randomness, no I/O; every input is checked
//! at construction and every result is a pure function of it.

use statrs::function::factorial::ln_binomial;
use statrs::function::gamma::ln_gamma;
use thiserror::Error;

use crate::analytic::PoissonPipeline;
use crate::dist::Hours;

/// Why a two-echelon or queueing computation could not be done.
#[derive(Debug, Error, Clone, PartialEq)]
pub enum EchelonError {
    /// A figure that must be finite and strictly positive was not.
    #[error("{name} must be a finite number greater than 0 (got {value})")]
    NotPositive { name: &'static str, value: f64 },
    /// A figure that must be finite and at least zero was not.
    #[error("{name} must be a finite number of at least 0 (got {value})")]
    Negative { name: &'static str, value: f64 },
    /// A chance outside [0, 1].
    #[error("{name} must be a chance between 0 and 1 (got {value})")]
    NotAChance { name: &'static str, value: f64 },
    /// A count that must be at least 1 was 0.
    #[error("{name} must be at least 1 (got 0)")]
    Zero { name: &'static str },
    /// A list that must give one entry per site has the wrong length.
    #[error("{name} has {got} entries; the model has {sites} sites")]
    PerSite {
        name: &'static str,
        got: usize,
        sites: usize,
    },
    /// Every site has a demand rate of 0.
    #[error("at least one site must have a demand rate greater than 0")]
    NoDemand,
    /// Graves' exact distribution needs a depot.
    #[error("the exact site distribution needs a depot; without one the site pipeline is Poisson")]
    NoDepot,
    /// An M/M/c queue whose arrivals outpace its servers has no steady state.
    #[error(
        "the repair shop is overloaded: arrival rate / (channels x repair rate) = {load} \
         must be below 1"
    )]
    Unstable { load: f64 },
}

fn positive(name: &'static str, value: f64) -> Result<f64, EchelonError> {
    if value > 0.0 && value.is_finite() {
        Ok(value)
    } else {
        Err(EchelonError::NotPositive { name, value })
    }
}

fn non_negative(name: &'static str, value: f64) -> Result<f64, EchelonError> {
    if value >= 0.0 && value.is_finite() {
        Ok(value)
    } else {
        Err(EchelonError::Negative { name, value })
    }
}

fn chance(name: &'static str, value: f64) -> Result<f64, EchelonError> {
    if (0.0..=1.0).contains(&value) {
        Ok(value)
    } else {
        Err(EchelonError::NotAChance { name, value })
    }
}

/// Relative size below which a series' further terms are dropped.
const SERIES_EPS: f64 = 1e-17;

// ---------------------------------------------------------------------------
// Pipeline laws
// ---------------------------------------------------------------------------

/// The negative binomial law of a pipeline count fitted to a mean `m` and a
/// variance `v > m` (Sherbrooke 1986, "VARI-METRIC", Operations Research
/// 34(2); his *Optimal Inventory Modeling of Systems*, 2nd ed. 2004):
/// `P(X = k) = Gamma(k + r) / (Gamma(r) k!) p^r (1 - p)^k` with
/// `p = m / v` and `r = m^2 / (v - m)`, the parameterisation of
/// `scipy.stats.nbinom(r, p)`.
///
/// Every series is summed from its small end with a rigorous bound on the
/// dropped remainder, so tail measures keep their relative digits.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct NegativeBinomial {
    mean: f64,
    variance: f64,
    /// Size `r`.
    size: f64,
    /// Success chance `p = m / v`.
    p: f64,
    /// `1 - p = (v - m) / v`, computed without cancellation.
    q: f64,
    /// `r ln p`.
    r_ln_p: f64,
}

impl NegativeBinomial {
    /// The law with mean `mean > 0` and variance `variance > mean`.
    ///
    /// # Errors
    /// When the mean is not finite and positive, or the variance is not
    /// finite and greater than the mean.
    pub fn from_moments(mean: f64, variance: f64) -> Result<Self, EchelonError> {
        let m = positive("negative binomial mean", mean)?;
        let excess = variance - m;
        if !(excess > 0.0 && variance.is_finite()) {
            return Err(EchelonError::NotPositive {
                name: "negative binomial variance minus mean",
                value: excess,
            });
        }
        let size = m * m / excess;
        let q = excess / variance;
        // ln p = -ln(v / m) = -ln(1 + (v - m) / m)
        let r_ln_p = -size * (excess / m).ln_1p();
        Ok(NegativeBinomial {
            mean: m,
            variance,
            size,
            p: m / variance,
            q,
            r_ln_p,
        })
    }

    /// The mean `m`.
    pub fn mean(&self) -> f64 {
        self.mean
    }

    /// The variance `v`.
    pub fn variance(&self) -> f64 {
        self.variance
    }

    /// The size parameter `r = m^2 / (v - m)` (scipy's `n`).
    pub fn size(&self) -> f64 {
        self.size
    }

    /// The success chance `p = m / v` (scipy's `p`).
    pub fn success(&self) -> f64 {
        self.p
    }

    /// `ln Gamma(k + r) - ln Gamma(r)`, by a direct product for small `k`
    /// (where the difference of two large log-gammas would lose digits).
    fn ln_rising(&self, k: u32) -> f64 {
        if k <= 64 {
            (0..k).map(|i| (self.size + f64::from(i)).ln()).sum()
        } else {
            ln_gamma(self.size + f64::from(k)) - ln_gamma(self.size)
        }
    }

    /// `P(X = k)`.
    pub fn pmf(&self, k: u32) -> f64 {
        let kf = f64::from(k);
        let ln_q_term = if k == 0 { 0.0 } else { kf * self.q.ln() };
        (self.ln_rising(k) - ln_gamma(kf + 1.0) + self.r_ln_p + ln_q_term).exp()
    }

    /// `P(X = k + 1) / P(X = k)`.
    fn up_ratio(&self, k: u32) -> f64 {
        (f64::from(k) + self.size) * self.q / (f64::from(k) + 1.0)
    }

    /// `sum_{k>=start} w(k) P(X = k)`, upwards; `w` positive and with
    /// `w(k+1)/w(k)` non-increasing. Stops once the dropped remainder is
    /// below `SERIES_EPS` of the sum: the pmf ratio never exceeds
    /// `max(current ratio, 1 - p)`, so the remainder is at most
    /// `term b / (1 - b)` with `b` that bound times the weight ratio.
    fn sum_up(&self, start: u32, w: impl Fn(u32) -> f64) -> f64 {
        let mut k = start;
        let mut p = self.pmf(start);
        let mut acc = 0.0;
        loop {
            let term = w(k) * p;
            acc += term;
            let Some(next) = k.checked_add(1) else { break };
            let ratio = self.up_ratio(k);
            let bound = ratio.max(self.q) * w(next) / w(k);
            if (bound < 1.0 && term * bound / (1.0 - bound) <= SERIES_EPS * acc) || p == 0.0 {
                break;
            }
            p *= ratio;
            k = next;
        }
        acc
    }

    /// `sum_{k=0}^{start} w(k) P(X = k)`, downwards; `w` positive and with
    /// `w(k-1)/w(k)` non-increasing as `k` falls. Stops early only when
    /// `r >= 1`, where the downward pmf ratio `k / ((k - 1 + r)(1 - p))`
    /// falls with `k`, so the current ratio bounds the rest.
    fn sum_down(&self, start: u32, w: impl Fn(u32) -> f64) -> f64 {
        let mut k = start;
        let mut p = self.pmf(start);
        let mut acc = 0.0;
        loop {
            let term = w(k) * p;
            acc += term;
            if k == 0 {
                break;
            }
            let ratio = f64::from(k) / ((f64::from(k) - 1.0 + self.size) * self.q);
            let bound = ratio * w(k - 1) / w(k);
            if self.size >= 1.0 && bound < 1.0 && term * bound / (1.0 - bound) <= SERIES_EPS * acc {
                break;
            }
            p *= ratio;
            k -= 1;
        }
        acc
    }

    /// `P(X <= k)`.
    pub fn cdf(&self, k: u32) -> f64 {
        if f64::from(k) < self.mean {
            self.sum_down(k, |_| 1.0)
        } else {
            1.0 - self.sf(k)
        }
    }

    /// `P(X > k)`.
    pub fn sf(&self, k: u32) -> f64 {
        if f64::from(k) < self.mean {
            1.0 - self.cdf(k)
        } else {
            match k.checked_add(1) {
                Some(start) => self.sum_up(start, |_| 1.0),
                None => 0.0,
            }
        }
    }

    /// Expected backorders `E[(X - s)+]`.
    pub fn backorders(&self, s: u32) -> f64 {
        let sf = f64::from(s);
        if sf >= self.mean {
            match s.checked_add(1) {
                Some(start) => self.sum_up(start, |k| f64::from(k) - sf),
                None => 0.0,
            }
        } else if s == 0 {
            self.mean
        } else {
            (self.mean - sf) + self.sum_down(s - 1, |k| sf - f64::from(k))
        }
    }

    /// Expected stock on hand `E[(s - X)+]`: summed directly below the
    /// mean, else `s - m + EBO(s)`.
    pub fn expected_on_hand(&self, s: u32) -> f64 {
        let sf = f64::from(s);
        if s == 0 {
            0.0
        } else if sf <= self.mean {
            self.sum_down(s - 1, |k| sf - f64::from(k))
        } else {
            (sf - self.mean) + self.backorders(s)
        }
    }
}

/// The law of a site's pipeline (units due in): Poisson, or the
/// two-moment negative binomial of VARI-METRIC.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum PipelineLaw {
    /// Poisson with the given mean (Palm's theorem; METRIC).
    Poisson(PoissonPipeline),
    /// Negative binomial fitted to a mean and a larger variance.
    NegativeBinomial(NegativeBinomial),
}

impl PipelineLaw {
    /// Sherbrooke's (1986) two-moment choice: the negative binomial with
    /// this mean and variance when the variance exceeds the mean, else
    /// Poisson with this mean (the variance is then dropped: a
    /// variance-to-mean ratio below 1 cannot arise from the depot's delay,
    /// only from rounding).
    ///
    /// # Errors
    /// When the mean or the variance is negative or not finite.
    pub fn two_moment(mean: f64, variance: f64) -> Result<Self, EchelonError> {
        let m = non_negative("pipeline mean", mean)?;
        let v = non_negative("pipeline variance", variance)?;
        if v > m && m > 0.0 {
            Ok(PipelineLaw::NegativeBinomial(
                NegativeBinomial::from_moments(m, v)?,
            ))
        } else {
            Ok(PipelineLaw::Poisson(poisson(m)))
        }
    }

    /// The mean.
    pub fn mean(&self) -> f64 {
        match self {
            PipelineLaw::Poisson(p) => p.mean(),
            PipelineLaw::NegativeBinomial(nb) => nb.mean(),
        }
    }

    /// The variance.
    pub fn variance(&self) -> f64 {
        match self {
            PipelineLaw::Poisson(p) => p.mean(),
            PipelineLaw::NegativeBinomial(nb) => nb.variance(),
        }
    }

    /// `P(X = k)`.
    pub fn pmf(&self, k: u32) -> f64 {
        match self {
            PipelineLaw::Poisson(p) => p.pmf(k),
            PipelineLaw::NegativeBinomial(nb) => nb.pmf(k),
        }
    }

    /// `P(X <= k)`.
    pub fn cdf(&self, k: u32) -> f64 {
        match self {
            PipelineLaw::Poisson(p) => p.cdf(k),
            PipelineLaw::NegativeBinomial(nb) => nb.cdf(k),
        }
    }

    /// `P(X > k)`.
    pub fn sf(&self, k: u32) -> f64 {
        match self {
            PipelineLaw::Poisson(p) => p.sf(k),
            PipelineLaw::NegativeBinomial(nb) => nb.sf(k),
        }
    }

    /// Expected backorders `E[(X - s)+]`.
    pub fn backorders(&self, s: u32) -> f64 {
        match self {
            PipelineLaw::Poisson(p) => p.backorders(s),
            PipelineLaw::NegativeBinomial(nb) => nb.backorders(s),
        }
    }

    /// Fill rate `P(X <= s - 1)` (0 for `s = 0`): the chance a demand is
    /// met from the shelf.
    pub fn fill_rate(&self, s: u32) -> f64 {
        if s == 0 { 0.0 } else { self.cdf(s - 1) }
    }

    /// `P(X <= s)`: the chance of no backorder at a random moment.
    pub fn no_backorder_probability(&self, s: u32) -> f64 {
        self.cdf(s)
    }

    /// Expected stock on hand `E[(s - X)+] = s - m + EBO(s)`.
    pub fn expected_on_hand(&self, s: u32) -> f64 {
        match self {
            PipelineLaw::Poisson(p) => p.expected_on_hand(s),
            PipelineLaw::NegativeBinomial(nb) => nb.expected_on_hand(s),
        }
    }
}

fn poisson(mean: f64) -> PoissonPipeline {
    match PoissonPipeline::new(mean) {
        Ok(p) => p,
        Err(e) => unreachable!("pipeline mean checked before: {e}"),
    }
}

/// A count law given by its probabilities `P(X = k)` for `k = 0..len`
/// (the mass beyond is below 1e-17 and dropped). Used for Graves' exact
/// site pipeline.
#[derive(Debug, Clone, PartialEq)]
pub struct CountLaw {
    pmf: Vec<f64>,
}

impl CountLaw {
    /// `P(X = k)` for `k = 0..len`.
    pub fn probabilities(&self) -> &[f64] {
        &self.pmf
    }

    /// The mean.
    pub fn mean(&self) -> f64 {
        self.pmf.iter().enumerate().map(|(k, p)| k as f64 * p).sum()
    }

    /// The variance.
    pub fn variance(&self) -> f64 {
        let m = self.mean();
        self.pmf
            .iter()
            .enumerate()
            .map(|(k, p)| (k as f64 - m).powi(2) * p)
            .sum()
    }

    /// `P(X > k)`, summed from the top so tail values keep their digits.
    pub fn sf(&self, k: u32) -> f64 {
        let k = k as usize;
        if k + 1 >= self.pmf.len() {
            return 0.0;
        }
        self.pmf[k + 1..].iter().rev().sum()
    }

    /// `P(X <= k)`.
    pub fn cdf(&self, k: u32) -> f64 {
        let k = (k as usize).min(self.pmf.len() - 1);
        let low: f64 = self.pmf[..=k].iter().sum();
        if low < 0.5 {
            low
        } else {
            1.0 - self.sf(k as u32)
        }
    }

    /// Expected backorders `E[(X - s)+]`, summed from the top.
    pub fn backorders(&self, s: u32) -> f64 {
        let s = s as usize;
        self.pmf
            .iter()
            .enumerate()
            .skip(s + 1)
            .rev()
            .map(|(k, p)| (k - s) as f64 * p)
            .sum()
    }

    /// Fill rate `P(X <= s - 1)` (0 for `s = 0`).
    pub fn fill_rate(&self, s: u32) -> f64 {
        if s == 0 { 0.0 } else { self.cdf(s - 1) }
    }

    /// `P(X <= s)`.
    pub fn no_backorder_probability(&self, s: u32) -> f64 {
        self.cdf(s)
    }

    /// Expected stock on hand `E[(s - X)+]`.
    pub fn expected_on_hand(&self, s: u32) -> f64 {
        self.pmf
            .iter()
            .take(s as usize)
            .enumerate()
            .map(|(k, p)| (s as usize - k) as f64 * p)
            .sum()
    }
}

/// The smallest `k >= mean` with `P(X > k) < 1e-18` for `X ~ Poisson(mean)`.
fn poisson_upper(p: &PoissonPipeline) -> u32 {
    let m = p.mean();
    let mut k = (m + 8.0 * m.sqrt() + 20.0).ceil() as u32;
    while p.sf(k) >= 1e-18 {
        k += (m.sqrt().ceil() as u32).max(4);
    }
    k
}

// ---------------------------------------------------------------------------
// The two-echelon model
// ---------------------------------------------------------------------------

/// One site's demand and resupply for one part type.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SiteDemand {
    /// Demands per hour at the site (removals that need a spare).
    pub rate: f64,
    /// Mean hours for a spare to reach the site once it leaves its source:
    /// the transport time from the depot when there is one, else the
    /// site's own resupply (repair turnaround or supplier lead time, see
    /// [`depot_resupply_mean`] for a mix).
    pub resupply: Hours,
}

/// How a site's pipeline count is modelled.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Approximation {
    /// METRIC (Sherbrooke 1968): Poisson with the VARI-METRIC mean.
    Metric,
    /// VARI-METRIC (Sherbrooke 1986): the two-moment negative binomial.
    #[default]
    VariMetric,
}

/// A figure for the depot and one per site, in site order.
#[derive(Debug, Clone, PartialEq)]
pub struct ByLocation<T> {
    /// The depot's figure (ignored when the model has no depot).
    pub depot: T,
    /// One figure per site.
    pub sites: Vec<T>,
}

/// The depot's measures at stock `S_0`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct DepotMeasures {
    /// Mean depot pipeline `Lambda T_0` (Poisson by Palm's theorem).
    pub pipeline_mean: f64,
    /// Depot expected backorders `E[B_0] = E[(X_0 - S_0)+]`.
    pub backorders: f64,
    /// `Var[B_0]`.
    pub backorder_variance: f64,
    /// The mean delay a site request waits at the depot,
    /// `E[B_0] / Lambda` (Little's law), in hours.
    pub expected_delay: Hours,
}

/// One site's measures at stock `S_j`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SiteMeasures {
    /// Mean of the site pipeline (units due in).
    pub pipeline_mean: f64,
    /// Variance of the site pipeline.
    pub pipeline_variance: f64,
    /// Expected backorders at the site.
    pub backorders: f64,
    /// Fill rate: chance a demand is met from the site's shelf,
    /// `P(pipeline <= S_j - 1)`.
    pub fill_rate: f64,
    /// Chance of no backorder at a random moment, `P(pipeline <= S_j)`.
    pub no_backorder: f64,
    /// Expected stock on hand at the site.
    pub on_hand: f64,
}

impl SiteMeasures {
    fn of_law(law: &PipelineLaw, mean: f64, variance: f64, s: u32) -> Self {
        SiteMeasures {
            pipeline_mean: mean,
            pipeline_variance: variance,
            backorders: law.backorders(s),
            fill_rate: law.fill_rate(s),
            no_backorder: law.no_backorder_probability(s),
            on_hand: law.expected_on_hand(s),
        }
    }
}

/// The measures of a whole stock allocation.
#[derive(Debug, Clone, PartialEq)]
pub struct Evaluation {
    /// The depot's measures (`None` without a depot).
    pub depot: Option<DepotMeasures>,
    /// Each site's measures, in site order.
    pub sites: Vec<SiteMeasures>,
}

impl Evaluation {
    /// Total expected backorders over the sites (the depot's backorders are
    /// not counted: they only delay the sites).
    pub fn total_backorders(&self) -> f64 {
        self.sites.iter().map(|s| s.backorders).sum()
    }
}

/// The mean depot resupply time when a share `condemn` of the removed parts
/// is condemned and bought new and the rest is repaired:
/// `(1 - c) E[repair] + c E[lead time]` (common practice; Sherbrooke 2004
/// treats condemnations the same way). For a consumable, pass `condemn = 1`.
///
/// # Errors
/// When a mean is negative or not finite, or `condemn` is outside [0, 1].
pub fn depot_resupply_mean(
    repair_mean: Hours,
    lead_mean: Hours,
    condemn: f64,
) -> Result<Hours, EchelonError> {
    let r = non_negative("mean repair time", repair_mean)?;
    let l = non_negative("mean lead time", lead_mean)?;
    let c = chance("condemnation share", condemn)?;
    Ok((1.0 - c) * r + c * l)
}

/// The two-echelon base-stock model of one part type: sites with Poisson
/// demand, each resupplied one for one from a depot (itself resupplied one
/// for one, first come first served across sites) or, without a depot,
/// directly.
///
/// With a depot of mean resupply `T_0` and total demand
/// `Lambda = sum_j lambda_j`, the depot pipeline `X_0` is
/// Poisson(`Lambda T_0`) (Palm's theorem), its backorders
/// `B_0 = (X_0 - S_0)+`, and site `j`'s pipeline has (Sherbrooke 1986;
/// Graves 1985), with `f_j = lambda_j / Lambda`:
///
/// - mean `lambda_j T_j + f_j E[B_0]`,
/// - variance `lambda_j T_j + f_j^2 Var[B_0] + f_j (1 - f_j) E[B_0]`.
///
/// Both moments are exact for Poisson demand; METRIC takes the site
/// pipeline as Poisson with that mean, VARI-METRIC as the negative binomial
/// with both moments. Without a depot, site `j`'s pipeline is exactly
/// Poisson(`lambda_j T_j`).
#[derive(Debug, Clone, PartialEq)]
pub struct TwoEchelon {
    sites: Vec<SiteDemand>,
    depot_resupply: Option<Hours>,
    total_rate: f64,
    approximation: Approximation,
}

impl TwoEchelon {
    fn build(sites: &[SiteDemand], depot_resupply: Option<Hours>) -> Result<Self, EchelonError> {
        if sites.is_empty() {
            return Err(EchelonError::Zero {
                name: "the number of sites",
            });
        }
        let mut total_rate = 0.0;
        for s in sites {
            total_rate += non_negative("site demand rate", s.rate)?;
            non_negative("site resupply time", s.resupply)?;
        }
        if total_rate <= 0.0 {
            return Err(EchelonError::NoDemand);
        }
        if let Some(t0) = depot_resupply {
            non_negative("depot resupply time", t0)?;
        }
        Ok(TwoEchelon {
            sites: sites.to_vec(),
            depot_resupply,
            total_rate,
            approximation: Approximation::default(),
        })
    }

    /// Sites under a depot whose mean resupply time is `depot_resupply`
    /// (repair turnaround, lead time, or the mix of
    /// [`depot_resupply_mean`]); each site's `resupply` is its transport
    /// time from the depot.
    ///
    /// # Errors
    /// When there is no site, a rate or a time is negative or not finite,
    /// or every rate is 0.
    pub fn with_depot(sites: &[SiteDemand], depot_resupply: Hours) -> Result<Self, EchelonError> {
        Self::build(sites, Some(depot_resupply))
    }

    /// Sites resupplied directly (no depot); each site's `resupply` is its
    /// own mean resupply time.
    ///
    /// # Errors
    /// As [`TwoEchelon::with_depot`].
    pub fn without_depot(sites: &[SiteDemand]) -> Result<Self, EchelonError> {
        Self::build(sites, None)
    }

    /// The same model with the site pipelines read by `approximation`
    /// (VARI-METRIC by default).
    pub fn with_approximation(mut self, approximation: Approximation) -> Self {
        self.approximation = approximation;
        self
    }

    /// The site pipeline law in use.
    pub fn approximation(&self) -> Approximation {
        self.approximation
    }

    /// The sites.
    pub fn sites(&self) -> &[SiteDemand] {
        &self.sites
    }

    /// True when there is a depot.
    pub fn has_depot(&self) -> bool {
        self.depot_resupply.is_some()
    }

    /// Total demand rate `Lambda`.
    pub fn total_rate(&self) -> f64 {
        self.total_rate
    }

    /// The depot's measures at stock `s0` (`None` without a depot).
    pub fn depot(&self, s0: u32) -> Option<DepotMeasures> {
        let t0 = self.depot_resupply?;
        let pipe = poisson(self.total_rate * t0);
        let backorders = pipe.backorders(s0);
        Some(DepotMeasures {
            pipeline_mean: pipe.mean(),
            backorders,
            backorder_variance: pipe.backorder_variance(s0),
            expected_delay: backorders / self.total_rate,
        })
    }

    /// Site `j`'s pipeline mean and variance with depot stock `s0`
    /// (`s0` ignored without a depot).
    ///
    /// # Panics
    /// When `j` is not a site index.
    pub fn site_pipeline_moments(&self, j: usize, s0: u32) -> (f64, f64) {
        let site = self.sites[j];
        let own = site.rate * site.resupply;
        match self.depot(s0) {
            None => (own, own),
            Some(d) => {
                let f = site.rate / self.total_rate;
                let mean = own + f * d.backorders;
                let var = own + f * f * d.backorder_variance + f * (1.0 - f) * d.backorders;
                (mean, var)
            }
        }
    }

    /// Site `j`'s pipeline law with depot stock `s0`, by the model's
    /// approximation (exactly Poisson without a depot).
    ///
    /// # Panics
    /// When `j` is not a site index.
    pub fn site_law(&self, j: usize, s0: u32) -> PipelineLaw {
        let (mean, var) = self.site_pipeline_moments(j, s0);
        let law = match self.approximation {
            Approximation::Metric => Ok(PipelineLaw::Poisson(poisson(mean))),
            Approximation::VariMetric => PipelineLaw::two_moment(mean, var),
        };
        match law {
            Ok(l) => l,
            Err(e) => unreachable!("site moments are finite and non-negative: {e}"),
        }
    }

    /// Site `j`'s measures with depot stock `s0` and site stock `sj`.
    ///
    /// # Panics
    /// When `j` is not a site index.
    pub fn site(&self, j: usize, s0: u32, sj: u32) -> SiteMeasures {
        let (mean, var) = self.site_pipeline_moments(j, s0);
        SiteMeasures::of_law(&self.site_law(j, s0), mean, var, sj)
    }

    /// All measures of a stock allocation.
    ///
    /// # Errors
    /// When `stock.sites` does not have one entry per site.
    pub fn evaluate(&self, stock: &ByLocation<u32>) -> Result<Evaluation, EchelonError> {
        self.check_per_site("site stocks", stock.sites.len())?;
        Ok(Evaluation {
            depot: self.depot(stock.depot),
            sites: (0..self.sites.len())
                .map(|j| self.site(j, stock.depot, stock.sites[j]))
                .collect(),
        })
    }

    fn check_per_site(&self, name: &'static str, got: usize) -> Result<(), EchelonError> {
        if got == self.sites.len() {
            Ok(())
        } else {
            Err(EchelonError::PerSite {
                name,
                got,
                sites: self.sites.len(),
            })
        }
    }

    /// Graves' (1985) exact law of site `j`'s pipeline with depot stock
    /// `s0`, for Poisson demand, a first-come-first-served depot resupplied
    /// with independent resupply times (unlimited repair capacity) and
    /// fixed transport times: the site's pipeline is its demands of the
    /// last `T_j` hours, Poisson(`lambda_j T_j`), plus its requests
    /// backordered at the depot `T_j` hours ago. The latter is `B_0`
    /// thinned binomially with chance `lambda_j / Lambda` (each depot
    /// request comes from site `j` with that chance, independently), and
    /// the two parts are independent. Graves, "A multi-echelon inventory
    /// model for a repairable item with one-for-one replenishment",
    /// Management Science 31(10), 1985 (details from memory).
    ///
    /// # Errors
    /// When the model has no depot.
    ///
    /// # Panics
    /// When `j` is not a site index.
    pub fn exact_site_law(&self, j: usize, s0: u32) -> Result<CountLaw, EchelonError> {
        let t0 = self.depot_resupply.ok_or(EchelonError::NoDepot)?;
        let site = self.sites[j];
        let f = site.rate / self.total_rate;
        // B_0's law: P(B_0 = 0) = P(X_0 <= S_0), P(B_0 = b) = P(X_0 = S_0 + b).
        let depot = poisson(self.total_rate * t0);
        let top = poisson_upper(&depot);
        let b_max = top.saturating_sub(s0) as usize;
        let mut b0 = vec![0.0; b_max + 1];
        b0[0] = depot.cdf(s0);
        for (b, slot) in b0.iter_mut().enumerate().skip(1) {
            *slot = depot.pmf(s0 + b as u32);
        }
        // Thinning: P(Z = z) = sum_b P(B_0 = b) C(b, z) f^z (1 - f)^(b - z).
        let mut z = vec![0.0; b_max + 1];
        if f >= 1.0 {
            z.copy_from_slice(&b0);
        } else if f <= 0.0 {
            z[0] = 1.0;
        } else {
            let (ln_f, ln_g) = (f.ln(), (-f).ln_1p());
            for (b, &pb) in b0.iter().enumerate() {
                if pb == 0.0 {
                    continue;
                }
                for (k, slot) in z.iter_mut().enumerate().take(b + 1) {
                    let ln_binom =
                        ln_binomial(b as u64, k as u64) + k as f64 * ln_f + (b - k) as f64 * ln_g;
                    *slot += pb * ln_binom.exp();
                }
            }
        }
        // Convolve with the site's own Poisson(lambda_j T_j).
        let own = poisson(site.rate * site.resupply);
        let y_max = poisson_upper(&own) as usize;
        let y: Vec<f64> = (0..=y_max).map(|k| own.pmf(k as u32)).collect();
        let mut pmf = vec![0.0; y_max + b_max + 1];
        for (i, &py) in y.iter().enumerate() {
            for (k, &pz) in z.iter().enumerate() {
                pmf[i + k] += py * pz;
            }
        }
        while pmf.len() > 1 && pmf.last().is_some_and(|&p| p == 0.0) {
            pmf.pop();
        }
        Ok(CountLaw { pmf })
    }

    /// Site `j`'s measures by Graves' exact law (see
    /// [`TwoEchelon::exact_site_law`]).
    ///
    /// # Errors
    /// When the model has no depot.
    ///
    /// # Panics
    /// When `j` is not a site index.
    pub fn exact_site(&self, j: usize, s0: u32, sj: u32) -> Result<SiteMeasures, EchelonError> {
        let law = self.exact_site_law(j, s0)?;
        Ok(SiteMeasures {
            pipeline_mean: law.mean(),
            pipeline_variance: law.variance(),
            backorders: law.backorders(sj),
            fill_rate: law.fill_rate(sj),
            no_backorder: law.no_backorder_probability(sj),
            on_hand: law.expected_on_hand(sj),
        })
    }
}

// ---------------------------------------------------------------------------
// Marginal analysis over the depot and the sites
// ---------------------------------------------------------------------------

/// One stock allocation of a part type with its cost and backorders.
#[derive(Debug, Clone, PartialEq)]
pub struct Allocation {
    /// Stock at the depot (0 without a depot) and at each site.
    pub stock: ByLocation<u32>,
    /// `price_0 S_0 + sum_j price_j S_j`.
    pub cost: f64,
    /// `sum_j w_j EBO_j(S_0, S_j)`: the weighted total site backorders.
    pub total_backorders: f64,
}

/// Checked inputs of the two marginal analyses.
struct Plan<'a> {
    model: &'a TwoEchelon,
    bounds: &'a ByLocation<u32>,
    prices: &'a ByLocation<f64>,
    weights: Vec<f64>,
}

impl<'a> Plan<'a> {
    fn new(
        model: &'a TwoEchelon,
        bounds: &'a ByLocation<u32>,
        prices: &'a ByLocation<f64>,
        weights: Option<&[f64]>,
    ) -> Result<Self, EchelonError> {
        model.check_per_site("site bounds", bounds.sites.len())?;
        model.check_per_site("site prices", prices.sites.len())?;
        for &p in &prices.sites {
            positive("site price", p)?;
        }
        if model.has_depot() {
            positive("depot price", prices.depot)?;
        }
        let weights = match weights {
            Some(w) => {
                model.check_per_site("site weights", w.len())?;
                for &x in w {
                    non_negative("site weight", x)?;
                }
                w.to_vec()
            }
            None => vec![1.0; model.sites.len()],
        };
        Ok(Plan {
            model,
            bounds,
            prices,
            weights,
        })
    }

    fn depot_bound(&self) -> u32 {
        if self.model.has_depot() {
            self.bounds.depot
        } else {
            0
        }
    }

    /// Weighted site backorders `w_j EBO_j(s)` for `s = 0..=bound_j`, with
    /// depot stock `s0`, each by its own sum (not by differences, so tiny
    /// EBOs keep their digits).
    fn site_curves(&self, s0: u32) -> Vec<Vec<f64>> {
        (0..self.model.sites.len())
            .map(|j| {
                let law = self.model.site_law(j, s0);
                (0..=self.bounds.sites[j])
                    .map(|s| self.weights[j] * law.backorders(s))
                    .collect()
            })
            .collect()
    }

    /// The site whose next spare cuts the weighted backorders most per unit
    /// of price (ties: the lower index), with that cut per unit of price;
    /// `None` when every site is at its bound.
    fn best_site(&self, stock: &[u32], curves: &[Vec<f64>]) -> Option<(f64, usize)> {
        let mut best: Option<(f64, usize)> = None;
        for (j, ((&s, curve), (&bound, &price))) in stock
            .iter()
            .zip(curves)
            .zip(self.bounds.sites.iter().zip(&self.prices.sites))
            .enumerate()
        {
            if s < bound {
                let s = s as usize;
                let gain = (curve[s] - curve[s + 1]) / price;
                if best.is_none_or(|b| gain > b.0) {
                    best = Some((gain, j));
                }
            }
        }
        best
    }

    fn cost(&self, stock: &ByLocation<u32>) -> f64 {
        let depot = if self.model.has_depot() {
            self.prices.depot * f64::from(stock.depot)
        } else {
            0.0
        };
        depot
            + stock
                .sites
                .iter()
                .zip(&self.prices.sites)
                .map(|(&s, &p)| p * f64::from(s))
                .sum::<f64>()
    }

    fn point(&self, stock: ByLocation<u32>, curves: &[Vec<f64>]) -> Allocation {
        let total_backorders = stock
            .sites
            .iter()
            .zip(curves)
            .map(|(&s, c)| c[s as usize])
            .sum();
        Allocation {
            cost: self.cost(&stock),
            total_backorders,
            stock,
        }
    }
}

/// Sherbrooke's marginal analysis over locations: from no stock anywhere,
/// repeatedly add one spare where it cuts the weighted total site
/// backorders most per unit of price (ties: the depot, then the lower site
/// index), within each location's bound; stops when every location is at
/// its bound or no spare cuts the backorders. Returns every step's
/// allocation from the all-zero one. `weights` (default 1 per site) scale
/// each site's backorders; without a depot the depot's bound and price are
/// ignored.
///
/// The total is convex in each site's stock but not in the depot's (the
/// first depot spares can cut the sites' delay less than later ones), so
/// with a depot this path can step off the lower convex hull: in the
/// two-site checks of `tests/echelon_refdata.rs`, 15 of its 90 points lie
/// above the hull, by up to 0.05 EBO. Without a depot the problem is
/// separable and convex and the path is on the hull. It is cheap (one
/// evaluation per location per step); seed a search with
/// [`allocation_hull`].
///
/// # Errors
/// When a list does not have one entry per site, a price is not finite and
/// positive, or a weight is negative or not finite.
pub fn allocation_path(
    model: &TwoEchelon,
    bounds: &ByLocation<u32>,
    prices: &ByLocation<f64>,
    weights: Option<&[f64]>,
) -> Result<Vec<Allocation>, EchelonError> {
    let plan = Plan::new(model, bounds, prices, weights)?;
    let n = model.sites.len();
    let depot_bound = plan.depot_bound();
    let mut curves = plan.site_curves(0);
    let mut stock = ByLocation {
        depot: 0,
        sites: vec![0u32; n],
    };
    let mut path = vec![plan.point(stock.clone(), &curves)];
    loop {
        let current = path.last().map_or(0.0, |a| a.total_backorders);
        // The depot's candidate: the sites' total with one more depot spare.
        let depot = (stock.depot < depot_bound).then(|| {
            let next = plan.site_curves(stock.depot + 1);
            let total: f64 = stock
                .sites
                .iter()
                .zip(&next)
                .map(|(&s, c)| c[s as usize])
                .sum();
            ((current - total) / prices.depot, next)
        });
        let site = plan.best_site(&stock.sites, &curves);
        // Ties go to the depot.
        match (depot, site) {
            (Some((gain, next)), best) if gain > 0.0 && best.is_none_or(|b| gain >= b.0) => {
                stock.depot += 1;
                curves = next;
            }
            (_, Some((gain, j))) if gain > 0.0 => stock.sites[j] += 1,
            _ => break,
        }
        path.push(plan.point(stock.clone(), &curves));
    }
    Ok(path)
}

/// Sherbrooke's remedy for the depot's non-convexity (Sherbrooke 2004,
/// the multi-echelon chapter; chapter from memory): for each depot stock
/// `S_0` from 0 to its bound, run the marginal analysis over the sites
/// alone (exact for a fixed `S_0`, each site's total being convex in its
/// own stock), pool the points and keep the vertices of their lower convex
/// hull in (cost, weighted total backorders), from the all-zero allocation
/// to the cheapest allocation with the least backorders. Every returned
/// point is optimal for its cost among all allocations within the bounds,
/// and no allocation lies below the segments between them. (The frontier's
/// search over sites runs the same marginal analysis per depot level but
/// keeps every step, not only the hull's vertices.)
///
/// Points on a hull edge but not at a vertex are dropped; among
/// allocations with the same (cost, backorders), the lowest depot stock
/// and then the first found is kept. Cost: `S_0` bound + 1 site analyses.
///
/// # Errors
/// As [`allocation_path`].
pub fn allocation_hull(
    model: &TwoEchelon,
    bounds: &ByLocation<u32>,
    prices: &ByLocation<f64>,
    weights: Option<&[f64]>,
) -> Result<Vec<Allocation>, EchelonError> {
    let plan = Plan::new(model, bounds, prices, weights)?;
    let n = model.sites.len();
    let mut pool: Vec<Allocation> = Vec::new();
    for s0 in 0..=plan.depot_bound() {
        let curves = plan.site_curves(s0);
        let mut stock = ByLocation {
            depot: s0,
            sites: vec![0u32; n],
        };
        pool.push(plan.point(stock.clone(), &curves));
        while let Some((gain, j)) = plan.best_site(&stock.sites, &curves) {
            if gain <= 0.0 {
                break;
            }
            stock.sites[j] += 1;
            pool.push(plan.point(stock.clone(), &curves));
        }
    }
    Ok(lower_hull(pool))
}

/// The vertices of the lower-left convex hull of `points` in
/// (cost, total backorders): from the cheapest point (least backorders
/// among the cheapest) to the point with the least backorders (cheapest
/// among those), by Andrew's monotone chain.
fn lower_hull(mut points: Vec<Allocation>) -> Vec<Allocation> {
    points.sort_by(|a, b| {
        a.cost
            .total_cmp(&b.cost)
            .then(a.total_backorders.total_cmp(&b.total_backorders))
    });
    let mut hull: Vec<Allocation> = Vec::new();
    for p in points {
        if let Some(last) = hull.last() {
            // Not below the last kept point: never on the falling hull.
            if p.total_backorders >= last.total_backorders {
                continue;
            }
        }
        while hull.len() >= 2 {
            let a = &hull[hull.len() - 2];
            let b = &hull[hull.len() - 1];
            // Drop b when it is not strictly below the segment a -> p.
            let cross = (b.cost - a.cost) * (p.total_backorders - a.total_backorders)
                - (b.total_backorders - a.total_backorders) * (p.cost - a.cost);
            if cross <= 0.0 {
                hull.pop();
            } else {
                break;
            }
        }
        hull.push(p);
    }
    hull
}

// ---------------------------------------------------------------------------
// Repair-shop queues
// ---------------------------------------------------------------------------

/// The M/M/c queue: Poisson arrivals, `c` servers with exponential service
/// (Gross & Harris, *Fundamentals of Queueing Theory*, the M/M/c section).
/// A repair shop with `c` channels, fed by Poisson removals.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct MmcQueue {
    arrival_rate: f64,
    service_rate: f64,
    servers: u32,
    /// Erlang B at `c` servers, by the stable recursion.
    erlang_b: f64,
}

impl MmcQueue {
    /// A queue with arrival rate `lambda`, service rate `mu` per server and
    /// `c` servers; needs `lambda < c mu`.
    ///
    /// # Errors
    /// When a rate is not finite and positive, `c` is 0, or the load
    /// `lambda / (c mu)` is at least 1.
    pub fn new(arrival_rate: f64, service_rate: f64, servers: u32) -> Result<Self, EchelonError> {
        let lambda = positive("arrival rate", arrival_rate)?;
        let mu = positive("repair rate", service_rate)?;
        if servers == 0 {
            return Err(EchelonError::Zero {
                name: "the number of repair channels",
            });
        }
        let load = lambda / (f64::from(servers) * mu);
        if load >= 1.0 || !load.is_finite() {
            return Err(EchelonError::Unstable { load });
        }
        // Erlang B: B(0) = 1, B(k) = a B(k-1) / (k + a B(k-1)).
        let a = lambda / mu;
        let mut b = 1.0;
        for k in 1..=servers {
            b = a * b / (f64::from(k) + a * b);
        }
        Ok(MmcQueue {
            arrival_rate: lambda,
            service_rate: mu,
            servers,
            erlang_b: b,
        })
    }

    /// Offered load `a = lambda / mu` (mean number of busy servers).
    pub fn offered_load(&self) -> f64 {
        self.arrival_rate / self.service_rate
    }

    /// Server utilisation `rho = lambda / (c mu)`.
    pub fn utilisation(&self) -> f64 {
        self.offered_load() / f64::from(self.servers)
    }

    /// Erlang B: the blocking chance of the loss system M/M/c/c.
    pub fn erlang_b(&self) -> f64 {
        self.erlang_b
    }

    /// Erlang C: the chance an arrival waits, `P(N >= c)`, from
    /// `C = B / (1 - rho (1 - B))`.
    pub fn erlang_c(&self) -> f64 {
        let rho = self.utilisation();
        self.erlang_b / (1.0 - rho * (1.0 - self.erlang_b))
    }

    /// Mean number waiting, `Lq = C rho / (1 - rho)`.
    pub fn mean_in_queue(&self) -> f64 {
        let rho = self.utilisation();
        self.erlang_c() * rho / (1.0 - rho)
    }

    /// Mean number in the system, `L = Lq + a`.
    pub fn mean_in_system(&self) -> f64 {
        self.mean_in_queue() + self.offered_load()
    }

    /// Mean wait before service, `Wq = Lq / lambda` (Little's law).
    pub fn mean_wait(&self) -> f64 {
        self.mean_in_queue() / self.arrival_rate
    }

    /// Mean time in the system (the turnaround), `W = Wq + 1 / mu`.
    pub fn mean_turnaround(&self) -> f64 {
        self.mean_wait() + 1.0 / self.service_rate
    }

    /// `P(N = n)`: `p_0 a^n / n!` below `c`, `p_0 a^n / (c! c^(n-c))` from
    /// `c` on, by the ratio from the Erlang C value (no factorials).
    pub fn probability(&self, n: u32) -> f64 {
        let a = self.offered_load();
        let c = self.servers;
        let rho = self.utilisation();
        // P(N = c) = C (1 - rho).
        let at_c = self.erlang_c() * (1.0 - rho);
        if n >= c {
            at_c * rho.powf(f64::from(n - c))
        } else {
            // P(N = n) = P(N = c) prod_{k=n+1}^{c} k / a
            let mut p = at_c;
            for k in (n + 1)..=c {
                p *= f64::from(k) / a;
            }
            p
        }
    }
}

/// The machine-repair model with spares (finite-source queue; Gross &
/// Harris, *Fundamentals of Queueing Theory*, "machine repair with
/// spares"): `N` units each run one part with exponential life (rate
/// `lambda`), `S` spares, `c` repair channels with exponential repair
/// (rate `mu`); a failed part is replaced at once by a spare if one is on
/// hand (zero replacement time), else its unit is down until a repaired part
/// comes; repaired parts are as good as new. Down units do not fail.
///
/// The state is the number of failed parts `n = 0..=N+S` (in repair or
/// waiting for a channel). Units up: `min(N, N + S - n)`. Birth rate
/// `lambda min(N, N + S - n)`, death rate `mu min(n, c)`.
#[derive(Debug, Clone, PartialEq)]
pub struct MachineRepair {
    units: u32,
    spares: u32,
    channels: u32,
    failure_rate: f64,
    repair_rate: f64,
}

/// The L1 distance to the stationary law below which uniformization stops
/// and counts the rest of the horizon at the stationary law.
const STEADY_TOL: f64 = 1e-13;
/// The dropped Poisson weight at which uniformization stops.
const UNIFORM_TAIL: f64 = 1e-15;

impl MachineRepair {
    /// `units` units, `spares` spares, `channels` repair channels, part
    /// failure rate and repair rate per hour.
    ///
    /// # Errors
    /// When `units` or `channels` is 0, or a rate is not finite and
    /// positive.
    pub fn new(
        units: u32,
        spares: u32,
        channels: u32,
        failure_rate: f64,
        repair_rate: f64,
    ) -> Result<Self, EchelonError> {
        if units == 0 {
            return Err(EchelonError::Zero {
                name: "the number of units",
            });
        }
        if channels == 0 {
            return Err(EchelonError::Zero {
                name: "the number of repair channels",
            });
        }
        Ok(MachineRepair {
            units,
            spares,
            channels,
            failure_rate: positive("failure rate", failure_rate)?,
            repair_rate: positive("repair rate", repair_rate)?,
        })
    }

    /// The number of states, `N + S + 1`.
    pub fn states(&self) -> usize {
        (self.units + self.spares) as usize + 1
    }

    /// The number of units.
    pub fn units(&self) -> u32 {
        self.units
    }

    /// Units up with `failed` parts failed.
    pub fn units_up(&self, failed: usize) -> u32 {
        let total = (self.units + self.spares) as usize;
        (total.saturating_sub(failed) as u32).min(self.units)
    }

    /// Rate of `n -> n + 1` (a failure).
    pub fn failure_rate_in(&self, n: usize) -> f64 {
        self.failure_rate * f64::from(self.units_up(n))
    }

    /// Rate of `n -> n - 1` (a repair ends).
    pub fn repair_rate_in(&self, n: usize) -> f64 {
        self.repair_rate * (n.min(self.channels as usize) as f64)
    }

    /// The generator `Q` (rows sum to 0), dense, on states `0..=N+S`.
    pub fn generator(&self) -> Vec<Vec<f64>> {
        let m = self.states();
        let mut q = vec![vec![0.0; m]; m];
        for (n, row) in q.iter_mut().enumerate() {
            let up = if n + 1 < m {
                self.failure_rate_in(n)
            } else {
                0.0
            };
            let down = self.repair_rate_in(n);
            if n + 1 < m {
                row[n + 1] = up;
            }
            if n > 0 {
                row[n - 1] = down;
            }
            row[n] = -(up + down);
        }
        q
    }

    /// The stationary distribution, from the birth-death balance
    /// `pi_{n+1} mu_{n+1} = pi_n lambda_n` in log space.
    pub fn stationary(&self) -> Vec<f64> {
        let m = self.states();
        let mut ln_p = vec![0.0; m];
        for n in 1..m {
            ln_p[n] = ln_p[n - 1] + self.failure_rate_in(n - 1).ln() - self.repair_rate_in(n).ln();
        }
        let top = ln_p.iter().copied().fold(f64::NEG_INFINITY, f64::max);
        let mut p: Vec<f64> = ln_p.iter().map(|&l| (l - top).exp()).collect();
        let total: f64 = p.iter().sum();
        for x in &mut p {
            *x /= total;
        }
        p
    }

    /// The uniformization rate: 1.02 times the largest exit rate, so the
    /// jump chain keeps a self-loop in every state (aperiodic).
    fn uniform_rate(&self) -> f64 {
        let top = (0..self.states())
            .map(|n| self.failure_rate_in(n) + self.repair_rate_in(n))
            .fold(0.0, f64::max);
        1.02 * top
    }

    /// One step of the uniformized jump chain: `v P`, `P = I + Q / q`.
    fn step(&self, v: &[f64], q: f64, out: &mut [f64]) {
        let m = v.len();
        for n in 0..m {
            let up = if n + 1 < m {
                self.failure_rate_in(n) / q
            } else {
                0.0
            };
            let down = self.repair_rate_in(n) / q;
            out[n] = v[n] * (1.0 - up - down);
        }
        for n in 0..m {
            if n + 1 < m {
                out[n + 1] += v[n] * self.failure_rate_in(n) / q;
            }
            if n > 0 {
                out[n - 1] += v[n] * self.repair_rate_in(n) / q;
            }
        }
    }

    /// Uniformization (Jensen 1953; Grassmann 1977) from "all new"
    /// (state 0): `sum_m weight(m) v_m` with `v_m = e_0 P^m`, where
    /// `weight(m)` comes from `Poisson(q t)` and `rest(m)` is the weight of
    /// all terms from `m` on. Stops when the rest is below `UNIFORM_TAIL`,
    /// or once `v_m` is within `STEADY_TOL` of the stationary law in L1
    /// (the jump chain never moves away from it again, so the rest is
    /// counted at the stationary law with an error below that tolerance).
    fn uniformize(
        &self,
        a: f64,
        mut weight: impl FnMut(u32) -> f64,
        rest: impl Fn(u32) -> f64,
    ) -> Vec<f64> {
        let m = self.states();
        let q = self.uniform_rate();
        let pi = self.stationary();
        let mut v = vec![0.0; m];
        v[0] = 1.0;
        let mut next = vec![0.0; m];
        let mut acc = vec![0.0; m];
        let mut k: u32 = 0;
        loop {
            let w = weight(k);
            for (x, &y) in acc.iter_mut().zip(&v) {
                *x += w * y;
            }
            let dist: f64 = v.iter().zip(&pi).map(|(x, p)| (x - p).abs()).sum();
            if dist <= STEADY_TOL {
                let r = rest(k + 1);
                for (x, &p) in acc.iter_mut().zip(&pi) {
                    *x += r * p;
                }
                break;
            }
            if f64::from(k) >= a && rest(k + 1) <= UNIFORM_TAIL {
                break;
            }
            self.step(&v, q, &mut next);
            std::mem::swap(&mut v, &mut next);
            k += 1;
        }
        // Renormalise the (at most 1e-15) dropped mass away.
        let total: f64 = acc.iter().sum();
        for x in &mut acc {
            *x /= total;
        }
        acc
    }

    /// The state distribution at time `t` from "all new", by
    /// uniformization: `sum_m Poisson(q t; m) e_0 P^m`.
    ///
    /// # Errors
    /// When `t` is negative or not finite.
    pub fn transient(&self, t: Hours) -> Result<Vec<f64>, EchelonError> {
        let t = non_negative("time", t)?;
        let a = self.uniform_rate() * t;
        let pois = poisson(a);
        Ok(self.uniformize(
            a,
            |k| pois.pmf(k),
            |k| if k == 0 { 1.0 } else { pois.sf(k - 1) },
        ))
    }

    /// The expected share of `[0, H]` spent in each state, from "all new":
    /// `(1/H) int_0^H p(t) dt = sum_m P(N > m) / (q H) e_0 P^m` with
    /// `N ~ Poisson(q H)`, since `int_0^H Poisson(q t; m) dt =
    /// P(N > m) / q`; the weight of the terms from `m` on is
    /// `E[(N - m)+] / (q H)`.
    ///
    /// # Errors
    /// When `horizon` is not finite and positive.
    pub fn time_average(&self, horizon: Hours) -> Result<Vec<f64>, EchelonError> {
        let h = positive("horizon", horizon)?;
        let a = self.uniform_rate() * h;
        let pois = poisson(a);
        // P(N > k): below the mean from a compensated running cdf (no
        // cancellation while the cdf is under about 1/2), from the mean on
        // by the upper-tail sum.
        let (mut cdf, mut carry) = (0.0f64, 0.0f64);
        let mut tail = move |k: u32| {
            if f64::from(k) < a {
                let pmf = pois.pmf(k);
                let t = cdf + pmf;
                carry += if cdf >= pmf {
                    (cdf - t) + pmf
                } else {
                    (pmf - t) + cdf
                };
                cdf = t;
                (1.0 - (cdf + carry)).max(0.0)
            } else {
                pois.sf(k)
            }
        };
        Ok(self.uniformize(a, |k| tail(k) / a, |k| pois.backorders(k) / a))
    }

    /// The share of a state distribution (or time-average) with at least
    /// `k` units up: the readiness of k-of-N.
    pub fn readiness(&self, distribution: &[f64], k: u32) -> f64 {
        distribution
            .iter()
            .enumerate()
            .filter(|&(n, _)| self.units_up(n) >= k)
            .map(|(_, p)| p)
            .sum()
    }

    /// Mean units up over `N` for a state distribution (or time-average).
    pub fn availability(&self, distribution: &[f64]) -> f64 {
        distribution
            .iter()
            .enumerate()
            .map(|(n, p)| f64::from(self.units_up(n)) * p)
            .sum::<f64>()
            / f64::from(self.units)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn close(a: f64, b: f64, tol: f64) {
        assert!((a - b).abs() <= tol, "{a} vs {b} (tol {tol})");
    }

    #[test]
    fn negative_binomial_identities() {
        // EBO(0) = m, EBO(s+1) = EBO(s) - P(X > s), on hand = s - m + EBO,
        // pmf sums to 1 and reproduces the moments (definitions).
        for (m, v) in [(0.4, 0.9), (3.0, 4.5), (3.0, 30.0), (40.0, 41.0)] {
            let nb = NegativeBinomial::from_moments(m, v).unwrap();
            let (mut s0, mut s1, mut s2) = (0.0, 0.0, 0.0);
            for k in 0..5000u32 {
                let p = nb.pmf(k);
                s0 += p;
                s1 += f64::from(k) * p;
                s2 += f64::from(k).powi(2) * p;
            }
            close(s0, 1.0, 1e-12);
            close(s1, m, 1e-10 * m);
            close(s2 - s1 * s1, v, 1e-9 * v);
            close(nb.backorders(0), m, 1e-12 * m);
            for s in 0..60u32 {
                close(
                    nb.backorders(s + 1),
                    nb.backorders(s) - nb.sf(s),
                    1e-13 * m.max(1.0),
                );
                close(nb.cdf(s) + nb.sf(s), 1.0, 1e-14);
                close(
                    nb.expected_on_hand(s),
                    f64::from(s) - m + nb.backorders(s),
                    1e-13 * m.max(f64::from(s)).max(1.0),
                );
            }
        }
        assert!(NegativeBinomial::from_moments(2.0, 2.0).is_err());
        assert!(matches!(
            PipelineLaw::two_moment(2.0, 1.5).unwrap(),
            PipelineLaw::Poisson(_)
        ));
        assert!(matches!(
            PipelineLaw::two_moment(0.0, 0.0).unwrap(),
            PipelineLaw::Poisson(_)
        ));
    }

    #[test]
    fn negative_binomial_near_poisson() {
        // v -> m: the negative binomial tends to the Poisson (common
        // practice; r -> infinity).
        let nb = NegativeBinomial::from_moments(2.5, 2.5 * (1.0 + 1e-9)).unwrap();
        let p = PoissonPipeline::new(2.5).unwrap();
        for s in 0..12u32 {
            close(nb.backorders(s), p.backorders(s), 1e-8);
            close(nb.pmf(s), p.pmf(s), 1e-9);
        }
    }

    fn three_sites() -> TwoEchelon {
        let sites = [
            SiteDemand {
                rate: 0.004,
                resupply: 24.0,
            },
            SiteDemand {
                rate: 0.003,
                resupply: 36.0,
            },
            SiteDemand {
                rate: 0.002,
                resupply: 48.0,
            },
        ];
        TwoEchelon::with_depot(&sites, 400.0).unwrap()
    }

    #[test]
    fn site_moments_sum_to_the_depot_delay() {
        // The sites' backordered requests add up to the depot's: sum_j of
        // the thinned means is E[B_0] (definitions).
        let m = three_sites();
        for s0 in 0..6 {
            let d = m.depot(s0).unwrap();
            let own: f64 = m.sites().iter().map(|s| s.rate * s.resupply).sum();
            let sum: f64 = (0..3).map(|j| m.site_pipeline_moments(j, s0).0).sum();
            close(sum, own + d.backorders, 1e-12);
            close(d.expected_delay * m.total_rate(), d.backorders, 1e-15);
        }
    }

    #[test]
    fn without_depot_sites_are_poisson_and_independent_of_s0() {
        let sites = [SiteDemand {
            rate: 0.01,
            resupply: 100.0,
        }];
        let m = TwoEchelon::without_depot(&sites).unwrap();
        assert!(m.depot(3).is_none());
        let p = PoissonPipeline::new(1.0).unwrap();
        for s in 0..6 {
            let a = m.site(0, 0, s);
            let b = m.site(0, 7, s);
            assert_eq!(a, b);
            close(a.backorders, p.backorders(s), 1e-15);
            close(a.fill_rate, p.fill_rate(s), 1e-15);
        }
        assert_eq!(m.exact_site_law(0, 0), Err(EchelonError::NoDepot));
    }

    #[test]
    fn exact_law_has_the_vari_metric_moments() {
        // Graves' exact pipeline and VARI-METRIC share both moments (the
        // variance formula is the law of total variance of the thinning).
        let m = three_sites();
        for s0 in [0u32, 1, 3, 6] {
            for j in 0..3 {
                let law = m.exact_site_law(j, s0).unwrap();
                let total: f64 = law.probabilities().iter().sum();
                close(total, 1.0, 1e-13);
                let (mean, var) = m.site_pipeline_moments(j, s0);
                close(law.mean(), mean, 1e-12);
                close(law.variance(), var, 1e-11);
            }
        }
    }

    #[test]
    fn inputs_are_checked() {
        let ok = SiteDemand {
            rate: 0.1,
            resupply: 1.0,
        };
        assert!(TwoEchelon::with_depot(&[], 1.0).is_err());
        assert!(
            TwoEchelon::with_depot(
                &[SiteDemand {
                    rate: f64::NAN,
                    resupply: 1.0
                }],
                1.0
            )
            .is_err()
        );
        assert_eq!(
            TwoEchelon::without_depot(&[SiteDemand {
                rate: 0.0,
                resupply: 1.0
            }]),
            Err(EchelonError::NoDemand)
        );
        assert!(TwoEchelon::with_depot(&[ok], -1.0).is_err());
        let m = TwoEchelon::with_depot(&[ok, ok], 10.0).unwrap();
        let stock = ByLocation {
            depot: 1,
            sites: vec![1],
        };
        assert!(matches!(
            m.evaluate(&stock),
            Err(EchelonError::PerSite {
                got: 1,
                sites: 2,
                ..
            })
        ));
        let bounds = ByLocation {
            depot: 2,
            sites: vec![2, 2],
        };
        let bad_prices = ByLocation {
            depot: 1.0,
            sites: vec![1.0, 0.0],
        };
        assert!(allocation_path(&m, &bounds, &bad_prices, None).is_err());
        let prices = ByLocation {
            depot: 1.0,
            sites: vec![1.0, 1.0],
        };
        assert!(allocation_hull(&m, &bounds, &prices, Some(&[1.0, -1.0])).is_err());
        assert!(depot_resupply_mean(10.0, 100.0, 1.5).is_err());
        close(depot_resupply_mean(10.0, 100.0, 0.1).unwrap(), 19.0, 1e-12);
        assert!(MmcQueue::new(2.0, 1.0, 2).is_err());
        assert!(MmcQueue::new(1.0, 1.0, 0).is_err());
        assert!(MachineRepair::new(0, 1, 1, 1.0, 1.0).is_err());
        assert!(MachineRepair::new(2, 1, 0, 1.0, 1.0).is_err());
        let mr = MachineRepair::new(2, 1, 1, 1.0, 1.0).unwrap();
        assert!(mr.time_average(0.0).is_err());
        assert!(mr.transient(-1.0).is_err());
    }

    #[test]
    fn allocation_path_is_monotone_and_respects_bounds() {
        let m = three_sites();
        let bounds = ByLocation {
            depot: 5,
            sites: vec![3, 3, 2],
        };
        let prices = ByLocation {
            depot: 1.0,
            sites: vec![1.0, 1.0, 1.0],
        };
        let path = allocation_path(&m, &bounds, &prices, None).unwrap();
        assert_eq!(path[0].cost, 0.0);
        for w in path.windows(2) {
            assert!(w[1].cost > w[0].cost);
            assert!(w[1].total_backorders < w[0].total_backorders);
        }
        for a in &path {
            assert!(a.stock.depot <= 5);
            for (s, b) in a.stock.sites.iter().zip(&bounds.sites) {
                assert!(s <= b);
            }
            let direct = m.evaluate(&a.stock).unwrap().total_backorders();
            close(a.total_backorders, direct, 1e-14);
        }
        let last = path.last().unwrap();
        assert_eq!(last.stock.depot, 5);
        assert_eq!(last.stock.sites, bounds.sites);
    }

    #[test]
    fn weights_scale_the_objective() {
        let m = three_sites();
        let bounds = ByLocation {
            depot: 3,
            sites: vec![3, 3, 3],
        };
        let prices = ByLocation {
            depot: 2.0,
            sites: vec![1.0, 1.0, 1.0],
        };
        // All weight on site 2: the other sites never get stock, as their
        // spares cut nothing.
        let path = allocation_path(&m, &bounds, &prices, Some(&[0.0, 0.0, 1.0])).unwrap();
        for a in &path {
            assert_eq!(a.stock.sites[0], 0);
            assert_eq!(a.stock.sites[1], 0);
            close(
                a.total_backorders,
                m.site(2, a.stock.depot, a.stock.sites[2]).backorders,
                1e-15,
            );
        }
    }

    #[test]
    fn mm1_and_mm2_closed_forms() {
        // M/M/1: L = rho/(1-rho), P(wait) = rho; M/M/2: L = 2 rho/(1-rho^2)
        // (Gross & Harris, the M/M/1 and M/M/c sections; standard).
        let q = MmcQueue::new(0.6, 1.0, 1).unwrap();
        close(q.mean_in_system(), 1.5, 1e-14);
        close(q.erlang_c(), 0.6, 1e-15);
        let q = MmcQueue::new(1.2, 1.0, 2).unwrap();
        let rho = 0.6;
        close(q.mean_in_system(), 2.0 * rho / (1.0 - rho * rho), 1e-14);
        let total: f64 = (0..400).map(|n| q.probability(n)).sum();
        close(total, 1.0, 1e-13);
        let mean: f64 = (0..400).map(|n| f64::from(n) * q.probability(n)).sum();
        close(mean, q.mean_in_system(), 1e-12);
    }

    #[test]
    fn short_horizons_follow_the_taylor_series() {
        // From "all new", p_0(t) = 1 - N lambda t + N lambda (N lambda + mu)
        // t^2 / 2 + O(t^3) (Taylor series of e^{Qt}: p_0'' = Q_00^2 +
        // Q_01 Q_10), so the share away from state 0 at t is
        // N lambda t (1 - (N lambda + mu) t / 2), and over [0, H] on average
        // N lambda H / 2 (1 - (N lambda + mu) H / 3); the rest is O(t^2).
        let mr = MachineRepair::new(4, 1, 1, 0.01, 0.1).unwrap();
        let (nl, mu) = (0.04, 0.1);
        for h in [1e-4, 1e-2, 1e-1] {
            let avg = mr.time_average(h).unwrap();
            let away: f64 = avg[1..].iter().sum();
            let want = nl * h / 2.0 * (1.0 - (nl + mu) * h / 3.0);
            close(away / want, 1.0, 0.01 * h * h + 1e-12);
            let now = mr.transient(h).unwrap();
            let away: f64 = now[1..].iter().sum();
            let want = nl * h * (1.0 - (nl + mu) * h / 2.0);
            close(away / want, 1.0, 0.01 * h * h + 1e-12);
        }
        assert_eq!(mr.transient(0.0).unwrap()[0], 1.0);
    }

    #[test]
    fn generator_rows_sum_to_zero_and_stationary_solves_it() {
        let mr = MachineRepair::new(5, 2, 2, 0.1, 0.4).unwrap();
        let q = mr.generator();
        let pi = mr.stationary();
        for row in &q {
            close(row.iter().sum::<f64>(), 0.0, 1e-15);
        }
        for j in 0..mr.states() {
            let x: f64 = pi.iter().zip(&q).map(|(p, row)| p * row[j]).sum();
            close(x, 0.0, 1e-15);
        }
        assert_eq!(mr.units_up(0), 5);
        assert_eq!(mr.units_up(2), 5);
        assert_eq!(mr.units_up(3), 4);
        assert_eq!(mr.units_up(7), 0);
    }
}
