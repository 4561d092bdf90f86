//! On-demand damage sampling: cost per cut and per state change, not per strike.
//!
//! # The problem
//! The strike-by-strike engine ([`super::sampler`]) draws every particle above a size floor:
//! about a thousand per demo history, over a million for a many-ribbon design sized close to
//! its margin. Almost all of those strikes leave a sub-critical hole that never matters.
//!
//! # What matters about a segment
//! A segment's state is its worst hole (holes at different places along a bay tens of km long
//! do not add) and whether it is cut. Its load changes only at a *state change* of its bay: a
//! cut (with its cascade), a splice, and in future an inspection that replaces holed segments
//! or a climber that arrives on or leaves the bay. Between two state changes of bay j, each
//! intact segment k carries a constant load and so has a constant critical width
//! c_k = w - load_k / (t σ_allow (1 - tol)): a hole removing more than c_k cuts it.
//!
//! # Poisson thinning
//! Holes on one segment form a marked Poisson process: holes arrive at rate H(floor) and their
//! removed widths X have P(X >= x) = H(x) / H(floor), where H(x) is the segment's rate of holes
//! removing at least x ([`crate::model::hole_rate`]). Thinning by mark (Kingman 1993, *Poisson
//! Processes*, the colouring theorem; a standard result) splits it into two **independent**
//! Poisson processes:
//! - holes with X >= c_k: the cut events of segment k, rate H(c_k);
//! - holes with X < c_k: sub-critical holes, rate H(floor) - H(c_k), marks with
//!   P(X < x | X < c_k) = (H(floor) - H(x)) / (H(floor) - H(c_k)).
//!
//! # The conditional maximum
//! Over an interval of length dt in which c_k is constant, the largest sub-critical hole M is
//! below x (floor <= x <= c_k) exactly when no sub-critical hole of width in [x, c_k) arrived.
//! Those arrive as a Poisson process of rate H(x) - H(c_k), so
//!
//! P(M < x) = exp(-(H(x) - H(c_k)) dt),
//!
//! and M is drawn by inversion with one uniform u: H(M) = H(c_k) - ln(u) / dt (when that rate
//! exceeds H(floor), M lies below the floor: nothing that can ever matter). The worst hole
//! after the interval is max(worst before, M), because the maximum of a union is the maximum of
//! the maxima.
//!
//! # The algorithm
//! 1. Draw only cut events. Bays never touched in this history all have the intact-bay loads,
//!    so their cut process is one Poisson process of rate Σ_j N H_j(c0_j) over the tether, with
//!    the bay chosen from an alias table. Bays touched in this history (they hold state) have
//!    their own rates Σ_k H_j(c_k); a candidate of the untouched-bay process that lands on a
//!    touched bay is discarded (thinning again: the touched bay's events come from its own
//!    process). Two independent processes superpose into one, so the next event is the earlier
//!    of the two next times; after a state change the touched process is redrawn at its new
//!    rate (exact by memorylessness).
//! 2. At a cut of segment i of bay j at time t: bring every intact segment of j up to date by
//!    one draw of M over [t_last_change, t] each, mark i cut (its removed width, drawn from
//!    P(X >= x | X >= c_i) = H(x) / H(c_i), is logged), apply the new loads and follow the
//!    cascade with the up-to-date worst holes, then compute the new critical widths and rates.
//! 3. At any other state change (a splice; in future an inspection or a climber's load) the
//!    same recipe: bring up to date, change, settle, new rates.
//! 4. At mission end nothing is drawn: no tally needs the sub-critical holes, and expected
//!    counts (strikes, sub-critical holes) follow from the rates.
//!
//! # Why it is exact
//! Every step is an identity in distribution for the process of holes above the floor that the
//! strike-by-strike engine samples: the thinning split is exact, the superposition and
//! discarding are exact, the conditional maximum is the exact law of the only statistic the
//! future depends on, and it is drawn exactly when the future first depends on it (a change of
//! loads). Holes below the floor can never sever (the floor is the smallest hole that severs in
//! any stable load state), so leaving them out changes nothing. The only approximation is the
//! numerical quadrature of H itself (see [`crate::model::hole_rate`]), which the tests bound.
//! The cost is O(cuts + state changes x N) per history, independent of the number of strikes.
//!
//! # Time-varying flux (meteor streams)
//! With streams H_j(x, t) = H_bg(x) + Σ_k g_k(t) H_k(x), g_k the stream's activity (1 at its
//! peak) and H_k its hole-rate table at the peak. Then, exactly:
//! - worst holes: P(M < x) = exp(-∫ (H(x, s) - H(c, s)) ds) over the interval, i.e. the
//!   formulas above with the interval's mean rate K(x) = H_bg(x) + Σ_k H_k(x) G_k / dt, G_k
//!   the closed-form integral of g_k (inverted on the shared x grid);
//! - untouched bays: each stream has its own cut process of rate g_k(t) Σ_j N H_k(c0_j), drawn
//!   by inversion of its integrated rate on the streams random stream (bay by alias table; a
//!   candidate on a bay holding state is discarded, as for the background);
//! - bays holding state: each segment's process runs at the dominating rate
//!   H_bg(c) + Σ_k H_k(c) (the streams at their peaks), and a candidate is attributed to a
//!   source in proportion and, for stream k, kept with probability g_k(t) (thinning, Lewis &
//!   Shedler 1979; a rejected candidate changes nothing). Under `--rare-event` the boost
//!   applies to the candidates and the compensator uses the dominating rate: the likelihood
//!   ratio of the candidate process, still unbiased.
//!
//! Without streams none of this draws anything: the default draws are unchanged.
//!
//! # Rare-event estimator
//! Under `--rare-event θ` the cut process of intact segments in bays that already have a cut
//! runs θ times faster, and the history carries the likelihood ratio
//! θ^-(such cuts) · exp((θ - 1) ∫ R_damaged(t) dt), R_damaged the natural cut rate of those
//! segments (failure biasing by rate inflation; Heidelberger 1995, ACM TOMACS 5, 43). The
//! strike-by-strike engine biases all strikes on damaged bays instead; both are unbiased
//! estimators of the same probability. Under `--latent-bias p` (on-demand only) the worst-hole
//! draws made just before a cut come from a defensive mixture that puts probability p on "at
//! least one segment of the bay reaches its critical width after this cut", with the bounded
//! likelihood ratio 1/(1 - p + p 1{B}/P(B)) (see `HistoryRun::bring_up_to_date` in events.rs;
//! Hesterberg 1995, Technometrics 37, 185).
//!
//! Under `--condition-cascades` (conditional Monte Carlo at cuts, the estimator for small
//! probabilities from latent damage) each cut scores the exact probability P that its cascade
//! severs the bay, summed over the other segments' worst-hole laws
//! ([`crate::analytic::cascade`]), and the history goes on in the surviving branch, weight
//! times `1 - P` (conditional expectation in place of the indicator: the estimator's mean is
//! unchanged). Three importance-sampling changes make the branches that matter frequent, each
//! with its likelihood ratio: first cuts are aimed at bays where they can sever
//! ([`FirstCutBias`]), damaged bays get an additive extra cut rate, and the surviving branch's
//! worst holes are drawn from a mixture that raises each segment's odds of reaching the next
//! threshold (`SURVIVOR_TILT` in events.rs, where `condition_on_survival` derives the weight).

use crate::model::hole_rate::HoleRateTable;
use crate::model::Model;
use crate::stats::AliasTable;
use crate::structure::load_sharing::CAPACITY_TOLERANCE;
use crate::structure::TetherProfile;

use super::EngineError;

/// Tables of the on-demand sampler, built once per model.
#[derive(Debug)]
pub struct OnDemandTables {
    /// H_j(x) per bay.
    pub(crate) holes: HoleRateTable,
    /// Critical width of an intact segment in an intact bay, per bay, m.
    pub(crate) intact_critical_m: Vec<f64>,
    /// Cut rate of one intact segment of an intact bay, per bay, 1/s.
    intact_cut_rate_s: Vec<f64>,
    /// Bay choice of the untouched-bay cut process (weights N H_j(c0_j)).
    bay_alias: AliasTable,
    /// Total rate of the untouched-bay cut process (all bays intact), 1/s.
    total_rate_s: f64,
    /// Expected sub-critical holes (at least the floor) per second, whole intact tether.
    subcritical_rate_s: f64,
    /// Meteor streams (empty: none): each stream's tables at its peak.
    pub(crate) streams: Vec<StreamTables>,
    /// The stream tables alone (for the combined-rate functions).
    pub(crate) stream_holes: Vec<HoleRateTable>,
}

/// Critical width and cut rate of every intact segment of a bay under its own largest tension,
/// by the number of intact segments, for a uniform load-sharing rule without meteor streams:
/// the values [`HistoryRun::loads_changed`](super::events) computes at each state change,
/// computed once with the same calls on the same loads (same bits), so a change costs a look-up.
/// A bay with a climber on it, or merged with its neighbours by a cut cross-link, carries
/// another load and is computed as before.
#[derive(Debug)]
pub(crate) struct UniformLevels {
    n: usize,
    /// `(load N, critical width m, cut rate 1/s)` at `j * (n + 1) + intact`.
    cells: Vec<(f64, f64, f64)>,
}

impl UniformLevels {
    /// `None` with meteor streams (their rates join each segment's) or a rule whose loads depend
    /// on which ribbons are cut. A uniform rule (`uniform_share_divisor` is `Some`) gives every
    /// intact ribbon one load that depends only on how many are intact.
    pub(crate) fn new(
        od: &OnDemandTables,
        profile: &TetherProfile,
        sharing: &dyn crate::structure::load_sharing::LoadSharing,
    ) -> Option<Self> {
        use crate::structure::load_sharing::MAX_RIBBONS;
        let n = profile.design.ribbon_count;
        if !od.stream_holes.is_empty() || n > MAX_RIBBONS {
            return None;
        }
        sharing.uniform_share_divisor(n, 1)?;
        let mut cells = Vec::with_capacity(profile.bays.len() * (n + 1));
        let mut mask = [false; MAX_RIBBONS];
        let mut loads = [0.0f64; MAX_RIBBONS];
        for (j, bay) in profile.bays.iter().enumerate() {
            let hr = od.holes.bay(j);
            cells.push((0.0, 0.0, 0.0));
            for intact in 1..=n {
                for (i, m) in mask[..n].iter_mut().enumerate() {
                    *m = i < intact;
                }
                sharing.distribute(&mask[..n], bay.max_tension_n, &mut loads[..n]);
                let c = critical_width_m(profile, j, loads[0]).max(hr.floor_m());
                cells.push((loads[0], c, hr.rate_at_least_per_s(c)));
            }
        }
        Some(UniformLevels { n, cells })
    }

    /// Load, critical width and cut rate of each of `intact` intact segments of bay `j`.
    #[inline]
    pub(crate) fn get(&self, j: usize, intact: usize) -> (f64, f64, f64) {
        self.cells[j * (self.n + 1) + intact]
    }
}

/// On-demand tables of one meteor stream at its peak.
#[derive(Debug)]
pub struct StreamTables {
    /// Cut rate at the peak of one intact segment of an intact bay, per bay, 1/s.
    pub(crate) intact_cut_rate_s: Vec<f64>,
    /// Bay choice of the stream's untouched-bay cut process.
    pub(crate) bay_alias: AliasTable,
    /// Total peak rate of that process (all bays intact), 1/s.
    pub(crate) total_rate_s: f64,
}

impl OnDemandTables {
    /// Build for a model (`floor_fraction` as for the strike sampler).
    pub fn new(model: &Model, floor_fraction: f64) -> Result<Self, EngineError> {
        let holes =
            HoleRateTable::build_background(model, floor_fraction).map_err(EngineError::Model)?;
        let p = &model.profile;
        let n = p.design.ribbon_count;
        let mut intact_critical_m = Vec::with_capacity(p.bays.len());
        let mut intact_cut_rate_s = Vec::with_capacity(p.bays.len());
        let mut weights = Vec::with_capacity(p.bays.len());
        let mut subcritical_rate_s = 0.0;
        for (j, bay) in p.bays.iter().enumerate() {
            let hr = holes.bay(j);
            // Every sharing rule gives T/N per ribbon when all are intact.
            let c = critical_width_m(p, j, bay.max_tension_n / n as f64).max(hr.floor_m());
            let r = hr.rate_at_least_per_s(c);
            intact_critical_m.push(c);
            intact_cut_rate_s.push(r);
            weights.push(r * n as f64);
            subcritical_rate_s += (hr.floor_rate_per_s() - r).max(0.0) * n as f64;
        }
        let total_rate_s: f64 = weights.iter().sum();
        let bay_alias = if total_rate_s > 0.0 {
            AliasTable::new(&weights)
        } else {
            AliasTable::new(&vec![1.0; weights.len()])
        }
        .map_err(|e| EngineError::Model(e.to_string()))?;
        let stream_holes = crate::model::streams::stream_tables(model, floor_fraction)
            .map_err(EngineError::Model)?;
        let mut streams = Vec::with_capacity(stream_holes.len());
        for t in &stream_holes {
            let rates: Vec<f64> = (0..p.bays.len())
                .map(|j| t.bay(j).rate_at_least_per_s(intact_critical_m[j]))
                .collect();
            let w: Vec<f64> = rates.iter().map(|r| r * n as f64).collect();
            let total: f64 = w.iter().sum();
            let bay_alias = if total > 0.0 {
                AliasTable::new(&w)
            } else {
                AliasTable::new(&vec![1.0; w.len()])
            }
            .map_err(|e| EngineError::Model(e.to_string()))?;
            streams.push(StreamTables {
                intact_cut_rate_s: rates,
                bay_alias,
                total_rate_s: total,
            });
        }
        Ok(OnDemandTables {
            streams,
            stream_holes,
            holes,
            intact_critical_m,
            intact_cut_rate_s,
            bay_alias,
            total_rate_s,
            subcritical_rate_s,
        })
    }

    /// Total cut rate of the intact tether, 1/s.
    pub fn intact_cut_rate_per_s(&self) -> f64 {
        self.total_rate_s
    }

    /// Critical width of an intact segment of intact bay `j`, m.
    pub fn intact_critical_width_m(&self, j: usize) -> f64 {
        self.intact_critical_m[j]
    }

    /// Cut rate of one intact segment of intact bay `j`, 1/s.
    pub fn segment_cut_rate_per_s(&self, j: usize) -> f64 {
        self.intact_cut_rate_s[j]
    }

    /// Expected sub-critical holes at least the floor per second on the intact tether.
    pub fn subcritical_rate_per_s(&self) -> f64 {
        self.subcritical_rate_s
    }

    /// Number of meteor streams.
    pub fn stream_count(&self) -> usize {
        self.streams.len()
    }

    /// Peak cut rate of one intact segment of intact bay `j` from stream `k`, 1/s.
    pub fn stream_segment_cut_rate_per_s(&self, k: usize, j: usize) -> f64 {
        self.streams[k].intact_cut_rate_s[j]
    }

    /// Peak cut rate from stream `k` of the intact tether, 1/s.
    pub fn stream_intact_cut_rate_per_s(&self, k: usize) -> f64 {
        self.streams[k].total_rate_s
    }

    /// The hole-rate table of stream `k` at its peak.
    pub fn stream_holes(&self, k: usize) -> &HoleRateTable {
        &self.stream_holes[k]
    }

    /// The hole-rate table.
    pub fn holes(&self) -> &HoleRateTable {
        &self.holes
    }

    /// A bay of the untouched-bay process, chosen in proportion to its rate.
    #[inline]
    pub(crate) fn pick_bay<R: rand::Rng + ?Sized>(&self, rng: &mut R) -> usize {
        self.bay_alias.sample(rng)
    }
}

/// Exponent a that flattens the aim π_j = (P_j / max P)^a of [`FirstCutBias`].
///
/// A tuning value (no source), chosen by measurement: P_j(T) bounds the severance chance of a
/// cut at mission end, while an earlier cut meets smaller holes, so bays with a small P_j still
/// carry much of the loss, and aiming in proportion to P_j (a = 1) leaves them with nearly the
/// natural rate and large weights. On the demo without repair at flux factor 0.1 (exact loss
/// probability 1.875e-6), six seeds of 1e6 histories each gave with a = 1 standard errors from
/// 2e-8 to 2e-7, effective sample sizes from 112 to 8,447 and a largest weight share up to 8 %;
/// with a = 0.25 standard errors 2.1e-8 to 5.1e-8, effective sample sizes 1,322 to 7,535 and
/// every estimate within 1.83e-6 .. 1.91e-6. Once the surviving branch was tilted
/// (`SURVIVOR_TILT` in `events.rs`), a = 0.5 gave the smallest SE² x time, a = 0.25 and a = 1
/// within 20 % of it; six seeds with a = 0.5: standard errors 1.19e-8 to 1.27e-8, effective
/// sample sizes 21,479 to 24,014, estimates 1.873e-6 to 1.884e-6.
pub(crate) const AIM_EXPONENT: f64 = 0.5;

/// Importance sampling of the untouched-bay cut process for the conditional Monte Carlo at cuts
/// (`--condition-cascades`): first cuts are drawn more often on the bays where a first cut is
/// most likely to start a severing cascade.
///
/// The natural process has rate r_j = N H_j(c0_j) on bay j. The biased one has
/// q_j = r_j (1 + κ π_j), with π_j = (P_j(T) / max_k P_k(T))^a, P_j(T) the probability that a
/// first cut at mission end severs the fresh bay j (all other segments with the holes of a whole
/// mission, [`crate::analytic::cascade`]), a = [`AIM_EXPONENT`], and κ set so the extra cuts number one per history on
/// average (Σ_j (q_j - r_j) T = 1; a tuning choice, common practice for a defensive mixture and
/// no source). Keeping the natural rate inside q_j (a defensive mixture, Hesterberg 1995,
/// Technometrics 37, 185) bounds each candidate's likelihood-ratio factor r_j / q_j by 1. The
/// history's likelihood ratio for the candidate process (a Poisson process changed from
/// intensity r to q; e.g. Asmussen & Glynn 2007, *Stochastic Simulation*, ch. V — from memory)
/// is Π_i (r_{j_i} / q_{j_i}) · exp((Q − R) τ), τ the end of the history, Q and R the totals.
/// Candidates landing on bays that hold state are discarded as before, under both measures.
#[derive(Debug)]
pub(crate) struct FirstCutBias {
    /// Bay choice with weights q_j.
    pub(crate) alias: AliasTable,
    /// Q, 1/s.
    pub(crate) total_rate_s: f64,
    /// Q − R, 1/s.
    pub(crate) excess_rate_s: f64,
    /// ln(r_j / q_j) per bay.
    pub(crate) ln_ratio: Vec<f64>,
}

impl FirstCutBias {
    /// The bias for a model, or `None` when no first cut anywhere can sever its bay (nothing
    /// to aim at: the plain candidate process is kept).
    pub(crate) fn new(
        od: &OnDemandTables,
        profile: &TetherProfile,
        sharing: &dyn crate::structure::load_sharing::LoadSharing,
        table: &crate::analytic::cascade::SeverTable,
        mission_s: f64,
    ) -> Option<Self> {
        use crate::analytic::cascade::MAX_SEGMENTS;
        let n = profile.design.ribbon_count;
        let m = n.checked_sub(1)?;
        if m == 0 || m > MAX_SEGMENTS || !(mission_s > 0.0) {
            return None;
        }
        let mut work = vec![0.0; 2 * table.max_states()];
        let mut bins = vec![0.0; m * (m + 1)];
        let mut sever = Vec::with_capacity(profile.bays.len());
        for (j, bay) in profile.bays.iter().enumerate() {
            let hr = od.holes.bay(j);
            let rate_c = od.intact_cut_rate_s[j];
            let mut ln_f = vec![0.0; m];
            for (k, f) in ln_f.iter_mut().enumerate() {
                let div = sharing.uniform_share_divisor(n, 1 + k)?;
                let load = if div > 0.0 {
                    bay.max_tension_n / div
                } else {
                    f64::INFINITY
                };
                let c = critical_width_m(profile, j, load);
                *f = if c > 0.0 {
                    let h = c.max(hr.floor_m());
                    -((hr.rate_at_least_per_s(h) - rate_c).max(0.0) * mission_s)
                } else {
                    f64::NEG_INFINITY
                };
            }
            let mut row = vec![0.0; m + 1];
            crate::analytic::cascade::parts_from_ln_f(&ln_f, &mut row);
            for r in 0..m {
                bins[r * (m + 1)..(r + 1) * (m + 1)].copy_from_slice(&row);
            }
            sever.push(table.sever_probability(m, &bins, &mut work).unwrap_or(0.0));
        }
        for x in sever.iter_mut() {
            *x = x.powf(AIM_EXPONENT);
        }
        let top = sever.iter().cloned().fold(0.0f64, f64::max);
        if !(top > 0.0) {
            return None;
        }
        let r: Vec<f64> = od.intact_cut_rate_s.iter().map(|x| x * n as f64).collect();
        let weighted: f64 = r.iter().zip(&sever).map(|(r, p)| r * p / top).sum();
        if !(weighted > 0.0) {
            return None;
        }
        let kappa = 1.0 / (mission_s * weighted);
        let q: Vec<f64> = r
            .iter()
            .zip(&sever)
            .map(|(r, p)| r * (1.0 + kappa * p / top))
            .collect();
        let total: f64 = q.iter().sum();
        let ln_ratio = r
            .iter()
            .zip(&q)
            .map(|(r, q)| if *q > 0.0 { (r / q).ln() } else { 0.0 })
            .collect();
        Some(FirstCutBias {
            alias: AliasTable::new(&q).ok()?,
            total_rate_s: total,
            excess_rate_s: total - od.total_rate_s,
            ln_ratio,
        })
    }
}

/// The critical width of a segment of bay `j` carrying `load_n`: the removed width above which
/// it is cut (the overload test of `settle_bay`, `load > capacity(D) (1 - tol)`, solved for the
/// hole under the design's notch model), m. May be <= 0 (cut without a hole).
#[inline]
pub fn critical_width_m(profile: &TetherProfile, j: usize, load_n: f64) -> f64 {
    profile.critical_removed_width_for_load_m(j, load_n / (1.0 - CAPACITY_TOLERANCE))
}
