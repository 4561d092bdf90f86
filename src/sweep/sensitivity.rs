//! One-at-a-time sensitivity: which uncertain input decides the loss probability?
//!
//! Each uncertain input (flux, particle density, hole size, load sharing, logistics…) is set
//! to the low and to the high end of its documented uncertainty range, all others at the base
//! scenario, and the loss probability is estimated at both ends. Every run uses the same seed
//! and number of histories as the base run (common random numbers, as in the trade study), so
//! the difference between the two ends is mostly the input's effect, not sampling noise.
//!
//! **The inputs are data** ([`INPUTS`]): a name, the scenario field path(s) it moves, how it
//! moves them (absolute values, or a factor on the base value applied to every path
//! together), and the basis of the range: a published source, or "engineering assumption".
//! An input whose field the scenario does not have (repair inputs without repair, the
//! detection delay with periodic inspection) is listed as not applicable. A new uncertain
//! input is one more line.
//!
//! **Swing** is `|P(high) − P(low)|`. It is only a measured difference when both ends are
//! resolved and at least one loss was seen at each end; otherwise the row says so
//! (`swing_status`) and ranks as unknown. Ends whose intervals overlap are marked as not
//! distinguishable by this run.

use serde::{Deserialize, Serialize};
use serde_json::Value;

use super::path;
use super::SweepError;
use crate::engine::{Engine, EngineError, LossProbability, RunChoices, RunSettings, RunSummary};
use crate::model::markov::mission_times_s;
use crate::model::Model;
use crate::scenario::{parse_spec, Scenario, ScenarioError};

/// How an input moves its field(s).
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Change {
    /// Absolute JSON values at the low and high end (the same for every path).
    Values {
        /// JSON text of the low value.
        low: &'static str,
        /// JSON text of the high value.
        high: &'static str,
    },
    /// Multiply the base value of every path by these factors.
    Scale {
        /// Factor at the low end.
        low: f64,
        /// Factor at the high end.
        high: f64,
    },
}

/// One uncertain input and its range.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct InputSpec {
    /// Name in tables.
    pub name: &'static str,
    /// Scenario field paths it moves.
    pub paths: &'static [&'static str],
    /// How.
    pub change: Change,
    /// Unit of the values shown.
    pub unit: &'static str,
    /// Where the range comes from (a source, or "engineering assumption").
    pub basis: &'static str,
    /// The field may be `null` in the base scenario, meaning "the model's default" (for
    /// example the oblique footprint, which follows the hole-size law unless set); the input
    /// then still applies. Otherwise a null field means "not applicable".
    pub null_base_ok: bool,
}

/// The uncertain inputs, one line each. The hole-size law's own coefficients are not varied
/// one by one: at the diameters that cut these ribbons both fitted laws fall inside the hole
/// factor's range, so the hole factor and the oblique footprint carry the hole-size
/// uncertainty. The lunar ejecta source is not an input here: switched on at face value it
/// dominates the answer, so it is studied on its own (README, "Lunar secondary ejecta").
pub const INPUTS: &[InputSpec] = &[
    InputSpec {
        name: "meteoroid flux scale factor",
        paths: &["environment.flux_scale_factor"],
        change: Change::Values { low: "0.33", high: "3.0" },
        unit: "x model flux",
        basis: "ECSS-E-ST-10-04C Rev.1 Annex J.2.3.2: flux uncertainty at a given mass at least a factor 0.33 to 3 (REFERENCES.md §1) [READ]",
        null_base_ok: false,
    },
    InputSpec {
        name: "particle density",
        paths: &["environment.particle_density_g_per_cm3"],
        change: Change::Values { low: "1.0", high: "3.0" },
        unit: "g/cm^3",
        basis: "low: 1 g/cm^3, the density the ECSS alternative (Divine-type) model uses between 1e-6 g and 0.01 g (REFERENCES.md §2) [READ]; high: 3 g/cm^3, stony material, engineering assumption",
        null_base_ok: false,
    },
    InputSpec {
        name: "hole factor (hole width / particle diameter)",
        paths: &["damage.hole_factor"],
        change: Change::Values { low: "1.0", high: "2.1" },
        unit: "-",
        basis: "REFERENCES-damage.md sensitivity table: low 1.0 thin-film limit (Francesconi et al. 2013) [READ]; high 2.1 Sawle-type law at 30 km/s [MEMORY law, COMPUTED value]",
        null_base_ok: false,
    },
    InputSpec {
        name: "oblique hole footprint (ellipse along the track)",
        paths: &["damage.oblique_footprint"],
        change: Change::Values { low: "false", high: "true" },
        unit: "on/off",
        basis: "REFERENCES-damage.md sensitivity table, oblique elongation: low round hole (no elongation); high ellipse d_p x d_p/cos(theta), cos(theta) capped at damage.min_cos_incidence [DERIVED geometry, an upper bound at grazing incidence]; damage grows markedly at highly oblique angles (Francesconi et al. 2013) [READ]",
        null_base_ok: true,
    },
    InputSpec {
        name: "notch model (residual strength of a holed ribbon)",
        paths: &["tether.material.notch_model"],
        change: Change::Values {
            low: r#"{"model":"net_section"}"#,
            high: r#"{"model":"point_stress","characteristic_length_mm":1.0,"kt_infinite":3.0,"finite_width_correction":true,"basis":"REFERENCES-damage.md 2.6: cross-plied or woven fibre films, Whitney-Nuismer with d_0 of order 1 mm until tests exist [MEMORY / physical reasoning]"}"#,
        },
        unit: "model",
        basis: "REFERENCES-damage.md sensitivity table, notch model: low net section (1 - D/W), the notch-insensitive bound; high Whitney-Nuismer point stress, d_0 = 1 mm, K_T = 3 with the isotropic finite-width correction (Whitney & Nuismer 1974 [READ] abstract, formulas [READ-sec]; d_0 = 1 mm [MEMORY])",
        null_base_ok: false,
    },
    InputSpec {
        name: "load-sharing rule",
        paths: &["tether.load_sharing"],
        change: Change::Values { low: "\"none\"", high: "\"local\"" },
        unit: "rule",
        basis: "bounds of the cross-link behaviour: none (each ribbon keeps its share) to local (Harlow–Phoenix nearest-neighbour); engineering assumption",
        null_base_ok: false,
    },
    InputSpec {
        name: "climber load on the bay (traffic load)",
        paths: &["tether.traffic_load_n"],
        change: Change::Scale { low: 0.0, high: 2.0 },
        unit: "N",
        basis: "no climber on the bay to twice the design traffic load; engineering assumption",
        null_base_ok: false,
    },
    InputSpec {
        name: "detection delay",
        paths: &["repair.detection.delay_hours"],
        change: Change::Values { low: "0.5", high: "48.0" },
        unit: "h",
        basis: "continuous monitoring (30 min) to a two-day inspection latency; engineering assumption",
        null_base_ok: false,
    },
    InputSpec {
        name: "climber speeds (up and down)",
        paths: &["repair.climber.speed_up_m_per_s", "repair.climber.speed_down_m_per_s"],
        change: Change::Scale { low: 0.5, high: 2.0 },
        unit: "m/s",
        basis: "half to twice the design speeds; engineering assumption",
        null_base_ok: false,
    },
    InputSpec {
        name: "resupply interval",
        paths: &["repair.resupply.interval_days"],
        change: Change::Scale { low: 0.5, high: 2.0 },
        unit: "days",
        basis: "half to twice the planned interval; engineering assumption",
        null_base_ok: false,
    },
];

/// How the runs are made.
#[derive(Clone, Debug, PartialEq)]
pub struct SensitivitySettings {
    /// The run settings of every run: histories (default: the base scenario's
    /// `run.histories`), seed (default: the base's `run.seed`), threads, sampler, rare-event
    /// factor, target error. No shards and no latent-damage bias.
    pub run: RunChoices,
    /// Also compute the fast damage-memory estimate of every variant.
    pub fast_estimate: bool,
    /// Text of the flux table file when the base scenario names one.
    pub flux_table_json: Option<String>,
}

impl Default for SensitivitySettings {
    fn default() -> Self {
        SensitivitySettings {
            run: RunChoices::default(),
            fast_estimate: true,
            flux_table_json: None,
        }
    }
}

/// The result of one run (one end of one input, or the base).
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct VariantResult {
    /// Loss probability by mission end with its interval (absent when infeasible).
    pub loss_probability: Option<LossProbability>,
    /// Histories that ended in loss (under the sampling measure).
    pub losses: Option<u64>,
    /// Histories run.
    pub histories: Option<u64>,
    /// Fast damage-memory estimate of the same scenario (absent when not computed).
    pub damage_memory_estimate: Option<f64>,
    /// Why the design could not be run.
    pub infeasible: Option<String>,
}

impl VariantResult {
    /// True when the loss probability is a measured value: resolved, and (plain Monte Carlo)
    /// at least one loss seen.
    pub fn measured(&self) -> bool {
        self.loss_probability
            .as_ref()
            .is_some_and(|l| l.resolved && l.estimate > 0.0)
    }
}

/// One input's row.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct SensitivityRow {
    /// Input name.
    pub input: String,
    /// Field paths moved.
    pub paths: Vec<String>,
    /// Value(s) at the low end (first path's value).
    pub low: Value,
    /// Value at the base.
    pub base: Value,
    /// Value at the high end.
    pub high: Value,
    /// Unit of the values.
    pub unit: String,
    /// Basis of the range.
    pub range_basis: String,
    /// Loss at the low end.
    pub loss_low: VariantResult,
    /// Loss at the base (the same run for every row).
    pub loss_base: VariantResult,
    /// Loss at the high end.
    pub loss_high: VariantResult,
    /// `|P(high) − P(low)|` of the point estimates.
    pub swing: f64,
    /// `P(high) − P(low)`.
    pub signed_swing: f64,
    /// `measured`, or why the swing is not a measured difference.
    pub swing_status: String,
    /// False when the two ends' intervals overlap (this run cannot tell them apart).
    pub distinguishable: bool,
    /// Swing of the fast damage-memory estimate, when computed.
    pub damage_memory_swing: Option<f64>,
}

/// An input that does not apply to this scenario.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct SkippedInput {
    /// Input name.
    pub input: String,
    /// Why.
    pub reason: String,
}

/// A whole sensitivity study; serialised as `sensitivity.json`.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct SensitivityResult {
    /// Program name.
    pub tool: String,
    /// Program version.
    pub version: String,
    /// Base scenario name.
    pub scenario: String,
    /// Master seed shared by every run.
    pub seed: u64,
    /// Histories per run.
    pub histories: u64,
    /// Rare-event factor (1: plain).
    pub rare_event_factor: f64,
    /// Conditional Monte Carlo at cuts (`--condition-cascades`; absent in older files: off).
    #[serde(default)]
    pub condition_cascades: bool,
    /// Damage sampler of every run (absent in studies written before it could be chosen:
    /// on-demand).
    #[serde(default)]
    pub sampler: crate::engine::Sampler,
    /// What common random numbers mean here.
    pub common_random_numbers: String,
    /// The base run.
    pub base: VariantResult,
    /// Rows sorted by swing, measured swings first (largest first), then the others.
    pub rows: Vec<SensitivityRow>,
    /// Inputs not applicable to this scenario.
    pub skipped: Vec<SkippedInput>,
    /// The engineering caution.
    pub caution: String,
}

fn scale_value(v: &Value, f: f64) -> Option<Value> {
    let x = v.as_f64()? * f;
    if v.is_u64() || v.is_i64() {
        Some(Value::from(x.round() as i64))
    } else {
        Some(Value::from(x))
    }
}

/// Run one scenario document.
fn evaluate(
    doc: &Value,
    run: &RunSettings,
    s: &SensitivitySettings,
    label: &str,
) -> Result<VariantResult, SweepError> {
    let infeasible = |reason: String| VariantResult {
        loss_probability: None,
        losses: None,
        histories: None,
        damage_memory_estimate: None,
        infeasible: Some(reason),
    };
    let spec = parse_spec(&doc.to_string()).map_err(|e| SweepError::Point {
        label: label.to_string(),
        source: Box::new(e),
    })?;
    let scenario = match Scenario::from_spec(spec, s.flux_table_json.clone()) {
        Ok(sc) => sc,
        Err(ScenarioError::Infeasible { reason }) => return Ok(infeasible(reason)),
        Err(e) => {
            return Err(SweepError::Point {
                label: label.to_string(),
                source: Box::new(e),
            })
        }
    };
    let model = match Model::build(scenario) {
        Ok(m) => m,
        Err(ScenarioError::Infeasible { reason }) => return Ok(infeasible(reason)),
        Err(e) => {
            return Err(SweepError::Point {
                label: label.to_string(),
                source: Box::new(e),
            })
        }
    };
    let engine = match Engine::for_settings(&model, run) {
        Ok(e) => e,
        Err(EngineError::Model(m)) => {
            return Ok(infeasible(format!("the strikes cannot be sampled: {m}")))
        }
        Err(e @ EngineError::NotCovered(_)) => {
            return Err(SweepError::NotCovered {
                label: label.to_string(),
                source: e,
            })
        }
        Err(e) => {
            return Err(SweepError::Run {
                label: label.to_string(),
                message: e.to_string(),
            })
        }
    };
    let opts = run.options(s.run.threads);
    let tally = engine.run(&opts, &|_| {}).map_err(|e| SweepError::Run {
        label: label.to_string(),
        message: e.to_string(),
    })?;
    let summary = RunSummary::from_tally(
        &engine,
        tally,
        run.histories,
        run.seed,
        None,
        run.stockout_target,
    );
    // The damage-memory estimate approximates local sharing by equal sharing: not a valid
    // answer for the local-sharing variant.
    let local = model.scenario.tether.load_sharing == crate::scenario::LoadSharingSpec::Local;
    let dm = if s.fast_estimate && !local {
        crate::model::damage_memory::solve(&model, &mission_times_s(&model.scenario.run))
            .and_then(|r| r.system_loss_probability.last().copied())
    } else {
        None
    };
    Ok(VariantResult {
        loss_probability: Some(summary.loss_probability.clone()),
        // Left out with the run's other biased counts (a conditioned run).
        losses: summary
            .tallies_withheld
            .is_none()
            .then_some(summary.tally.losses),
        histories: Some(summary.histories),
        damage_memory_estimate: dm,
        infeasible: None,
    })
}

fn overlap(a: &VariantResult, b: &VariantResult) -> bool {
    let ia = a.loss_probability.as_ref().and_then(|l| l.interval());
    let ib = b.loss_probability.as_ref().and_then(|l| l.interval());
    match (ia, ib) {
        (Some((a0, a1)), Some((b0, b1))) => a0 <= b1 && b0 <= a1,
        _ => true,
    }
}

fn status(lo: &VariantResult, hi: &VariantResult) -> String {
    let why = |v: &VariantResult, end: &str| -> Option<String> {
        if let Some(r) = &v.infeasible {
            return Some(format!("{end} end infeasible ({r})"));
        }
        let l = v.loss_probability.as_ref()?;
        if !l.resolved {
            return Some(format!(
                "{end} end not resolved ({})",
                l.unresolved_reason.as_deref().unwrap_or("no interval")
            ));
        }
        if l.estimate == 0.0 {
            return Some(format!(
                "{end} end: no loss seen (only an upper bound, {})",
                l.ci_high.map_or("-".into(), |h| format!("{h:.2e}"))
            ));
        }
        None
    };
    let parts: Vec<String> = [why(lo, "low"), why(hi, "high")]
        .into_iter()
        .flatten()
        .collect();
    if parts.is_empty() {
        "measured".into()
    } else {
        format!("unresolved swing: {}", parts.join("; "))
    }
}

/// Run the study over `base_json` (a scenario document) for `inputs` (normally [`INPUTS`]),
/// calling `progress(message)` after each run.
pub fn run_sensitivity(
    base_json: &Value,
    inputs: &[InputSpec],
    s: &SensitivitySettings,
    progress: &dyn Fn(&str),
) -> Result<SensitivityResult, SweepError> {
    s.run.check_study("a sensitivity study")?;
    let base_spec =
        parse_spec(&base_json.to_string()).map_err(|e| SweepError::Base(Box::new(e)))?;
    let run = s.run.resolve(base_spec.run.histories, base_spec.run.seed)?;
    let canonical = serde_json::to_value(&base_spec)
        .map_err(|e| SweepError::Spec(format!("the base scenario cannot be re-serialised: {e}")))?;
    let base = evaluate(&canonical, &run, s, "base")?;
    progress("base scenario");
    let mut rows = Vec::new();
    let mut skipped = Vec::new();
    for input in inputs {
        let current: Vec<Option<&Value>> = input
            .paths
            .iter()
            .map(|p| path::get(&canonical, p))
            .collect();
        if let Some(k) = current
            .iter()
            .position(|c| c.is_none() || (c == &Some(&Value::Null) && !input.null_base_ok))
        {
            skipped.push(SkippedInput {
                input: input.name.into(),
                reason: format!("the scenario has no field {}", input.paths[k]),
            });
            continue;
        }
        let mut ends = Vec::with_capacity(2);
        let mut shown = Vec::with_capacity(2);
        for end in 0..2 {
            let mut doc = canonical.clone();
            let mut first = Value::Null;
            for (i, p) in input.paths.iter().enumerate() {
                let base_v = current[i].cloned().unwrap_or(Value::Null);
                let v = match input.change {
                    Change::Values { low, high } => {
                        serde_json::from_str(if end == 0 { low } else { high })
                            .map_err(|e| SweepError::Spec(format!("{}: {e}", input.name)))?
                    }
                    Change::Scale { low, high } => {
                        scale_value(&base_v, if end == 0 { low } else { high }).ok_or_else(
                            || {
                                SweepError::Spec(format!(
                                    "{}: {} is not a number in the base scenario",
                                    input.name, p
                                ))
                            },
                        )?
                    }
                };
                if i == 0 {
                    first = v.clone();
                }
                path::set(&mut doc, p, v);
            }
            let label = format!("{} = {}", input.name, first);
            match evaluate(&doc, &run, s, &label) {
                Ok(v) => ends.push(v),
                // A variant the conditioned estimator does not cover (local sharing, say) is
                // left out with the engine's reason rather than run by another method: the
                // row's two ends and the base must come from one estimator.
                Err(SweepError::NotCovered { source, .. }) => {
                    skipped.push(SkippedInput {
                        input: input.name.into(),
                        reason: format!("{label}: {source}"),
                    });
                    break;
                }
                Err(e) => return Err(e),
            }
            progress(&label);
            shown.push(first);
        }
        if ends.len() < 2 {
            continue;
        }
        let (lo, hi) = (ends.remove(0), ends.remove(0));
        let est = |v: &VariantResult| v.loss_probability.as_ref().map_or(0.0, |l| l.estimate);
        let signed = est(&hi) - est(&lo);
        let dm_swing = match (lo.damage_memory_estimate, hi.damage_memory_estimate) {
            (Some(a), Some(b)) => Some((b - a).abs()),
            _ => None,
        };
        rows.push(SensitivityRow {
            input: input.name.into(),
            paths: input.paths.iter().map(|p| p.to_string()).collect(),
            low: shown[0].clone(),
            base: current[0].cloned().unwrap_or(Value::Null),
            high: shown[1].clone(),
            unit: input.unit.into(),
            range_basis: input.basis.into(),
            swing: signed.abs(),
            signed_swing: signed,
            swing_status: status(&lo, &hi),
            distinguishable: !overlap(&lo, &hi),
            loss_low: lo,
            loss_base: base.clone(),
            loss_high: hi,
            damage_memory_swing: dm_swing,
        });
    }
    // Measured swings first, largest first; unresolved ones after, by their nominal swing.
    rows.sort_by(|a, b| {
        let ma = a.swing_status == "measured";
        let mb = b.swing_status == "measured";
        mb.cmp(&ma)
            .then(b.swing.total_cmp(&a.swing))
            .then(a.input.cmp(&b.input))
    });
    Ok(SensitivityResult {
        tool: "tether-risk".into(),
        version: crate::VERSION.into(),
        scenario: base_spec.name.clone(),
        seed: run.seed,
        histories: run.histories,
        rare_event_factor: run.rare_event,
        condition_cascades: run.condition_cascades,
        sampler: run.sampler,
        common_random_numbers: super::CRN_NOTE.into(),
        base,
        rows,
        skipped,
        caution: crate::CAUTION.into(),
    })
}
