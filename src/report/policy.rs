//! The paired preventive-replacement comparison as a report section and a CSV table
//! (`policy_effect.csv`): the same histories with and without the policy, the difference of the
//! loss probabilities with Newcombe's paired interval, and what the policy costs in spares.

use super::html::{KeyNumber, ReportTable, Section};
use super::run::count_noun;
use super::table::{sig, Table};
use crate::engine::PolicyEffect;
use crate::stats::clopper_pearson;

/// One row per variant and one for the difference: losses, histories, the loss probability with
/// its interval, preventive replacements and spares per history.
pub fn policy_table(e: &PolicyEffect) -> Table {
    let mut t = Table::new([
        "variant",
        "losses",
        "histories",
        "loss_probability",
        "ci_low",
        "ci_high",
        "interval_method",
        "replaced_per_history",
        "spares_per_history",
    ]);
    let n = e.histories;
    let mut variant = |name: &str, k: u64, p: f64, replaced: f64, spares: f64| {
        let (lo, hi) = clopper_pearson(k, n, e.confidence).unwrap_or((0.0, 1.0));
        t.push([
            name.to_string(),
            k.to_string(),
            n.to_string(),
            sig(p, 3),
            sig(lo, 3),
            sig(hi, 3),
            "Clopper-Pearson".into(),
            sig(replaced, 4),
            sig(spares, 4),
        ]);
    };
    variant(
        "with the policy",
        e.losses_with_policy,
        e.loss_probability_with_policy,
        e.replaced_per_history,
        e.spares_per_history_with_policy,
    );
    variant(
        "without the policy",
        e.losses_without_policy,
        e.loss_probability_without_policy,
        0.0,
        e.spares_per_history_without_policy,
    );
    t.push([
        "difference (with - without)".to_string(),
        String::new(),
        n.to_string(),
        sig(e.difference, 3),
        sig(e.difference_low, 3),
        sig(e.difference_high, 3),
        "Newcombe paired score".into(),
        sig(e.replaced_per_history, 4),
        sig(
            e.spares_per_history_with_policy - e.spares_per_history_without_policy,
            4,
        ),
    ]);
    t
}

/// The report section "Would inspection and preventive replacement help?".
pub fn policy_section(e: &PolicyEffect) -> Section {
    let conf = format!("{:.0} %", 100.0 * e.confidence);
    let verdict = if !e.resolved {
        format!(
            "These {} histories do not resolve the policy's effect: the {conf} interval of the difference includes zero. Run more histories before deciding on it.",
            e.histories
        )
    } else if e.difference < 0.0 {
        let factor = if e.losses_with_policy > 0 {
            format!(
                " (roughly {} times lower; the figure with the policy rests on {})",
                sig(
                    e.loss_probability_without_policy / e.loss_probability_with_policy,
                    1
                ),
                count_noun(e.losses_with_policy, "loss", "losses")
            )
        } else {
            " (no loss was seen with the policy)".to_string()
        };
        format!(
            "The policy lowers the loss probability from {} to {}{factor}; the difference is resolved by these histories.",
            sig(e.loss_probability_without_policy, 3),
            sig(e.loss_probability_with_policy, 3)
        )
    } else {
        format!(
            "The policy raises the loss probability from {} to {}: its replacements take climbers and spares that later cuts lack. The difference is resolved by these histories.",
            sig(e.loss_probability_without_policy, 3),
            sig(e.loss_probability_with_policy, 3)
        )
    };
    let which = if e.run_has_policy {
        "The rest of this report is the run with the policy."
    } else {
        "The rest of this report is the design as given, without the policy; the policy was added for this comparison only."
    };
    let paragraphs = vec![
        format!("Policy: {}.", e.policy),
        format!(
            "The same {} histories (seed {}) were run with and without it: each history draws from the same random streams under both variants (common random numbers), so the two estimates are compared history by history and the interval of their difference ({}) is much narrower than that of two independent runs. {which}",
            e.histories, e.seed, e.interval_method
        ),
        verdict,
        format!(
            "Cost: {} segments replaced preventively per history, so {} spare segments used per history instead of {}; the stock and climber time they take are part of the run with the policy, and {} qualifying segments per history were left for want of a spare. {} Paired outcomes: {} lost under both variants, {} only with the policy, {} only without it (once a replacement changes a history, its later random draws no longer line up with the other variant's, so single histories are not attributable to the policy).",
            sig(e.replaced_per_history, 3),
            sig(e.spares_per_history_with_policy, 3),
            sig(e.spares_per_history_without_policy, 3),
            sig(e.short_of_spares_per_history, 3),
            if e.run_has_policy {
                ""
            } else {
                "The stock recommendation above is for the design without the policy: add the policy to the scenario and run it for its own."
            },
            e.lost_in_both,
            e.lost_only_with_policy,
            e.lost_only_without_policy
        ),
    ];
    let mut t = policy_table(e);
    t.headers = [
        "variant",
        "losses",
        "histories",
        "loss probability",
        "lower bound",
        "upper bound",
        "interval",
        "replaced per history",
        "spares per history",
    ]
    .iter()
    .map(|h| h.to_string())
    .collect();
    Section {
        heading: "Would inspection and preventive replacement help?".into(),
        paragraphs,
        cards: vec![
            KeyNumber {
                label: "Loss probability with the policy".into(),
                value: sig(e.loss_probability_with_policy, 3),
                note: count_noun(e.losses_with_policy, "loss", "losses")
                    + &format!(" in {} histories", e.histories),
            },
            KeyNumber {
                label: "Change from the policy".into(),
                value: sig(e.difference, 3),
                note: format!(
                    "{conf} interval {} to {}",
                    sig(e.difference_low, 3),
                    sig(e.difference_high, 3)
                ),
            },
            KeyNumber {
                label: "Extra spares per history".into(),
                value: sig(
                    e.spares_per_history_with_policy - e.spares_per_history_without_policy,
                    3,
                ),
                note: "replacements plus splices, against splices alone".into(),
            },
        ],
        tables: vec![ReportTable::from_table(
            format!(
                "Loss probability with and without the policy over the same histories ({conf}; each variant exact binomial, the difference {})",
                e.interval_method
            ),
            &t,
        )],
        ..Default::default()
    }
}
