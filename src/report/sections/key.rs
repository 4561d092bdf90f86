//! The key-numbers section and the one-sentence answer.

use super::*;
use crate::report::failure::year_label;
use crate::report::html::{KeyNumber, Section};
use crate::report::reader::RunFolder;
use crate::report::table::sig;

pub(crate) fn key_section(folder: &RunFolder) -> Section {
    let s = &folder.summary;
    let lp = &s.loss_probability;
    let conf = format!("{:.0} %", 100.0 * lp.confidence);
    let years = year_label(s.mission_years);
    let mut cards = Vec::new();
    let basis = match &s.rare_event {
        Some(r) => format!(
            "weighted {} estimate, {} histories, {} losses under the biased measure, SE {}, effective sample size {}, largest weight {} %",
            if r.condition_cascades {
                "conditional Monte Carlo"
            } else {
                "rare-event"
            },
            s.histories,
            r.losses_observed,
            sig(lp.standard_error, 2),
            sig(lp.effective_sample_size, 3),
            sig(100.0 * lp.largest_weight_share, 2)
        ),
        None => format!(
            "{} losses in {} histories, Clopper–Pearson",
            s.tally.losses, s.histories
        ),
    };
    cards.push(KeyNumber {
        label: format!("Probability of losing the tether within {years} years"),
        value: if lp.resolved {
            sig(lp.estimate, 2)
        } else {
            format!("{} (not resolved)", sig(lp.estimate, 2))
        },
        note: match lp.interval() {
            Some((lo, hi)) => format!("{conf} interval {} – {}; {basis}", sig(lo, 2), sig(hi, 2)),
            None => format!(
                "no interval: {}; {basis}",
                lp.unresolved_reason.as_deref().unwrap_or("not resolved")
            ),
        },
    });
    // A conditioned run's loss locations are counts of its biased measure: no card.
    if s.tallies_withheld.is_none() {
        let (band, note) = worst_band(s);
        cards.push(KeyNumber {
            label: "Where it is severed".into(),
            value: band,
            note: format!("altitude above the lunar surface; {note}"),
        });
    }
    if let (Some(r), Some(sp)) = (&s.repair, &s.spares) {
        let stock = r
            .recommended_initial_stock
            .iter()
            .map(|x| format!("{}: {}", x.station, x.segments))
            .collect::<Vec<_>>()
            .join(" · ");
        let interval = sp
            .demand_quantiles
            .first()
            .map_or(String::new(), |d| sig(d.interval_days, 4));
        cards.push(KeyNumber {
            label: "Recommended initial spare stock (segments)".into(),
            value: stock,
            note: format!(
                "per station; stock-out within one {interval}-day resupply interval below {}",
                pct(r.stockout_target)
            ),
        });
        let climbers = climber_count(folder.scenario.as_ref())
            .map_or(String::new(), |c| format!("{c} climbers; "));
        cards.push(KeyNumber {
            label: "Repair fleet utilisation".into(),
            value: pct(r.climber_utilisation),
            note: format!(
                "{climbers}{} splices per year; waits per segment: {} h for a climber, {} h for stock",
                sig(r.splices_per_year, 3),
                sig(r.mean_wait_for_climber_hours, 3),
                sig(r.mean_wait_for_stock_hours, 3)
            ),
        });
        let t = &r.time_to_splice_hours;
        cards.push(KeyNumber {
            label: "Time from cut to splice".into(),
            value: format!("{} h median", sig(t.p50, 3)),
            note: format!(
                "P90 {} h, P99 {} h, mean {} h; per segment sent: travel {} h{}, splicing {} h",
                sig(t.p90, 3),
                sig(t.p99, 3),
                sig(t.mean, 3),
                sig(r.mean_trip_travel_hours, 3),
                if r.mean_wait_for_light_hours > 0.0 {
                    format!(
                        ", waiting for light {} h",
                        sig(r.mean_wait_for_light_hours, 3)
                    )
                } else {
                    String::new()
                },
                sig(r.mean_trip_splice_hours, 3)
            ),
        });
    }
    if let Some(e) = &folder.estimate {
        // A ratio of 0 from a run that saw no loss says nothing: give the bound instead.
        let ratio = if lp.estimate == 0.0 {
            format!(
                "no loss seen in the Monte Carlo (upper bound {}), so no ratio",
                lp.ci_high.map_or("not resolved".into(), |h| sig(h, 2))
            )
        } else if e.loss_probability > 0.0 {
            format!(
                "Monte Carlo / Markov = {}",
                sig(lp.estimate / e.loss_probability, 2)
            )
        } else {
            "Markov estimate is 0".into()
        };
        if let Some(d) = e
            .damage_memory
            .as_ref()
            .filter(|d| d.loss_probability.is_finite() && (0.0..=1.0).contains(&d.loss_probability))
        {
            let agree = match (lp.ci_low, lp.ci_high) {
                (Some(lo), Some(hi)) if lp.estimate > 0.0 => {
                    if (lo..=hi).contains(&d.loss_probability) {
                        "inside the Monte Carlo interval".to_string()
                    } else {
                        format!(
                            "outside the Monte Carlo interval (Monte Carlo / estimate = {})",
                            sig(lp.estimate / d.loss_probability.max(f64::MIN_POSITIVE), 2)
                        )
                    }
                }
                _ => "no resolved Monte Carlo interval to compare with".into(),
            };
            cards.push(KeyNumber {
                label: format!("Fast damage-memory estimate, {years} years"),
                value: sig(d.loss_probability, 2),
                note: format!(
                    "{agree}; remembers each segment's worst hole ({}); dominant mechanism: {}",
                    if d.exact {
                        "exact without repair"
                    } else {
                        "approximation with repair"
                    },
                    d.dominant_mechanism
                ),
            });
        }
        cards.push(KeyNumber {
            label: format!("Fast Markov estimate, {years} years"),
            value: sig(e.loss_probability, 2),
            note: format!("{ratio}; ignores sub-critical damage memory and fleet contention"),
        });
    }
    let mut paragraphs = Vec::new();
    if let Some(w) = &folder.incomplete {
        paragraphs.push(format!(
            "WARNING: incomplete run folder: {w}. Check the numbers against the run's own output before relying on them."
        ));
    }
    paragraphs.push(answer_sentence(folder));
    if s.status != crate::engine::RunStatus::Complete {
        paragraphs.push(format!(
            "Run status: {:?}. {} of {} requested histories were run; the numbers rest on those.",
            s.status, s.histories, s.histories_requested
        ));
    }
    if s.shard.is_some() {
        paragraphs.push(
            "This folder holds one shard of a run: a partial result. Merge the shards first."
                .into(),
        );
    }
    Section {
        heading: "The answer in brief".into(),
        paragraphs,
        cards,
        ..Default::default()
    }
}

pub(crate) fn answer_sentence(folder: &RunFolder) -> String {
    let s = &folder.summary;
    let lp = &s.loss_probability;
    let c = &s.losses_by_cause;
    let mut o = match lp.interval() {
        Some((lo, hi)) => format!(
            "Over the {}-year mission the tether is severed with probability {} ({:.0} % interval {} to {}{}). ",
            year_label(s.mission_years),
            sig(lp.estimate, 2),
            100.0 * lp.confidence,
            sig(lo, 2),
            sig(hi, 2),
            if lp.is_weighted() {
                ", weighted estimate"
            } else {
                ""
            }
        ),
        None => format!(
            "Over the {}-year mission the weighted estimate of the probability that the tether is severed is {} (standard error {}), but it is NOT RESOLVED: {}. No interval can be given; run more histories or a better-suited estimator before quoting it. ",
            year_label(s.mission_years),
            sig(lp.estimate, 2),
            sig(lp.standard_error, 2),
            lp.unresolved_reason.as_deref().unwrap_or("too few effective losses")
        ),
    };
    let total = c.direct_cut + c.cascade + c.stockout_delay + c.climber_load;
    if s.tallies_withheld.is_some() {
        // Causes are biased-measure counts here: the withheld-tallies sentence below says so.
    } else if total > 0 {
        o.push_str(&format!(
            "Of the {total} losses seen, {} were cascades (survivors overloaded after a cut), {} direct cuts, {} losses while waiting for spare stock and {} caused by a climber's weight arriving on a weakened bay. ",
            c.cascade, c.direct_cut, c.stockout_delay, c.climber_load
        ));
    } else {
        o.push_str("No loss was seen: the upper bound is what these histories can rule out. ");
    }
    if let Some(d) = folder
        .estimate
        .as_ref()
        .and_then(|e| e.damage_memory.as_ref())
    {
        o.push_str(&format!(
            "The fast damage-memory estimate, which remembers each segment's worst hole ({}), gives {}; dominant mechanism: {}. ",
            if d.exact { "exact without repair" } else { "an approximation with repair" },
            sig(d.loss_probability, 2),
            d.dominant_mechanism
        ));
    }
    if let Some(e) = &folder.estimate {
        if e.loss_probability > 0.0 && lp.estimate > 0.0 {
            let r = lp.estimate / e.loss_probability;
            if r > 10.0 {
                o.push_str(&format!(
                    "The fast Markov estimate ({}) is {} times smaller because it forgets sub-critical holes and ignores fleet contention; here those effects dominate the risk. ",
                    sig(e.loss_probability, 2),
                    sig(r, 2)
                ));
            } else {
                o.push_str(&format!(
                    "The fast Markov estimate ({}) agrees within a factor {}. ",
                    sig(e.loss_probability, 2),
                    sig(r.max(1.0 / r), 2)
                ));
            }
        }
    }
    if let Some(r) = &s.repair {
        let stock = r
            .recommended_initial_stock
            .iter()
            .map(|x| {
                format!(
                    "{} segment{} at {}",
                    x.segments,
                    if x.segments == 1 { "" } else { "s" },
                    x.station
                )
            })
            .collect::<Vec<_>>()
            .join(" and ");
        o.push_str(&format!(
            "The repair fleet is busy {} of the time; a cut is spliced within {} h in 90 % of cases; an initial stock of {stock} keeps the stock-out chance per resupply interval below {}.",
            pct(r.climber_utilisation),
            sig(r.time_to_splice_hours.p90, 3),
            pct(r.stockout_target)
        ));
    } else if let Some(why) = &s.tallies_withheld {
        o.push_str(why);
    } else {
        o.push_str("This scenario has no repair: cut segments stay cut.");
    }
    o
}
