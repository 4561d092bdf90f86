//! Charts and the HTML report: every chart decodes as a PNG of the right size and is not blank,
//! its SVG carries the title and axis labels, output is byte-identical across renders,
//! degenerate input gives a typed error or a chart with a note (never a panic), and the HTML
//! report escapes text and contains every figure and table it was given.
//!
//! Set `TETHER_RISK_PLOT_SAMPLES=/some/dir` to also write the sample charts there for viewing.

use tether_risk::report::html::{
    render_report, KeyNumber, ReportDoc, ReportFigure, ReportTable, Section,
};
use tether_risk::report::plot::*;
use tether_risk::stats::pareto_front;

fn spec(title: &str, x: &str, y: &str) -> ChartSpec {
    ChartSpec::new(title, x, y)
}

/// Survival over 20 years: a Monte Carlo line with its interval band and a Markov line.
fn survival_series() -> Vec<Series> {
    let years: Vec<f64> = (0..=20).map(f64::from).collect();
    let mc: Vec<f64> = years.iter().map(|t| (-0.004 * t).exp()).collect();
    let lo: Vec<f64> = mc.iter().map(|s| s - 0.004 * (1.0 - s).sqrt()).collect();
    let hi: Vec<f64> = mc
        .iter()
        .map(|s| (s + 0.004 * (1.0 - s).sqrt()).min(1.0))
        .collect();
    let markov: Vec<f64> = years.iter().map(|t| (-0.0037 * t).exp()).collect();
    vec![
        Series::new("Monte Carlo", years.clone(), mc).with_band(
            "95 % Clopper–Pearson interval",
            lo,
            hi,
        ),
        Series::new("Markov estimate", years, markov).dashed(),
    ]
}

/// The same as loss probabilities, small enough to need a log axis.
fn loss_series() -> Vec<Series> {
    let years: Vec<f64> = (0..=20).map(f64::from).collect();
    let loss: Vec<f64> = years.iter().map(|t| 2e-7 * t * t).collect();
    let lo: Vec<f64> = loss.iter().map(|p| p * 0.5).collect();
    let hi: Vec<f64> = loss.iter().map(|p| p * 1.8 + 1e-7).collect();
    let markov: Vec<f64> = years.iter().map(|t| 1.5e-7 * t * t + 1e-9).collect();
    vec![
        Series::new("Monte Carlo", years.clone(), loss).with_band("95 % interval", lo, hi),
        Series::new("Markov estimate", years, markov).dashed(),
    ]
}

fn bars() -> Vec<Bar> {
    (0..15)
        .map(|i| {
            let v = 0.3 + 2.0 * (-(i as f64 - 4.0).powi(2) / 18.0).exp();
            Bar::new(format!("{}–{}", i * 10_000, (i + 1) * 10_000), v)
                .with_error(v * 0.85, v * 1.15)
        })
        .collect()
}

fn pmf() -> Vec<PmfPoint> {
    // Poisson with mean 6, truncated at 20.
    let mut p = (-6.0f64).exp();
    (0..=20u64)
        .map(|k| {
            if k > 0 {
                p *= 6.0 / k as f64;
            }
            PmfPoint {
                count: k,
                probability: p,
            }
        })
        .collect()
}

fn splice_bins() -> Vec<HistogramBin> {
    (0..40)
        .map(|i| {
            let lo = i as f64 * 10.0;
            let mid = lo + 5.0;
            HistogramBin {
                lo,
                hi: lo + 10.0,
                height: 0.1 * (mid / 60.0) * (-mid / 60.0).exp(),
            }
        })
        .collect()
}

fn grid() -> HeatmapGrid {
    let ribbons = [4, 6, 8, 10, 12];
    let spacing = [100.0, 200.0, 500.0, 1000.0, 2000.0, 5000.0];
    HeatmapGrid {
        x_labels: spacing.iter().map(|s| format!("{s}")).collect(),
        y_labels: ribbons.iter().map(|n| n.to_string()).collect(),
        z: ribbons
            .iter()
            .map(|n| {
                spacing
                    .iter()
                    .map(|s| (1e-2 * (s / 5000.0) / (*n as f64 / 4.0).powi(4)).min(1.0))
                    .collect()
            })
            .collect(),
        z_label: "Loss probability over 20 years (-)".into(),
    }
}

fn designs() -> Vec<ParetoPoint> {
    let raw = [
        ("A", 1.2e5, 3e-3),
        ("B", 1.5e5, 8e-4),
        ("C", 1.6e5, 2e-3),
        ("D", 2.0e5, 9e-5),
        ("E", 2.1e5, 1e-4),
        ("F", 2.6e5, 2e-5),
        ("G", 3.0e5, 0.0),
        ("H", 2.9e5, 4e-4),
    ];
    raw.iter()
        .map(|(l, m, p)| ParetoPoint {
            label: format!("Design {l}"),
            mass_kg: *m,
            loss_probability: *p,
        })
        .collect()
}

/// All sample charts with the words their SVG must contain.
fn samples() -> Vec<(&'static str, Figure, Vec<&'static str>)> {
    let s1 = spec(
        "How likely is the tether to survive each year?",
        "Time since start (years)",
        "Probability of survival (-)",
    );
    let s2 = spec(
        "How likely is the tether to be lost by each year?",
        "Time since start (years)",
        "Loss probability (-)",
    );
    let s3 = spec(
        "Where along the tether do cuts happen?",
        "Altitude band (km)",
        "Cuts per year",
    );
    let s4 = spec(
        "How many spare segments should the base hold?",
        "Spare segments needed per resupply interval",
        "Probability (-)",
    );
    let s5 = spec(
        "How long is a ribbon cut before it is spliced?",
        "Time from cut to splice (hours)",
        "Probability per bin (-)",
    );
    let s6 = spec(
        "Which designs keep loss probability low?",
        "Cross-link spacing (m)",
        "Ribbons per bay",
    );
    let s7 = spec(
        "Which designs give the lowest risk for their mass?",
        "Tether mass (kg)",
        "Loss probability (-)",
    );
    vec![
        (
            "survival",
            survival_chart(&survival_series(), ProbabilityAxis::Survival, &s1).unwrap(),
            vec![
                "How likely is the tether to survive each year?",
                "Time since start (years)",
                "Probability of survival (-)",
                "Markov estimate",
            ],
        ),
        (
            "loss_log",
            survival_chart(&loss_series(), ProbabilityAxis::LossLog, &s2).unwrap(),
            vec![
                "How likely is the tether to be lost by each year?",
                "Loss probability (-)",
                "1e-5",
            ],
        ),
        (
            "cuts_by_altitude",
            bar_chart(&bars(), &s3).unwrap(),
            vec![
                "Where along the tether",
                "Altitude band (km)",
                "Cuts per year",
            ],
        ),
        (
            "spare_demand",
            histogram_chart(
                &pmf(),
                &[Marker::new(11.0, "Recommended stock: 11 segments (99 %)")],
                &s4,
            )
            .unwrap(),
            vec![
                "How many spare segments",
                "Spare segments needed",
                "Recommended stock: 11",
            ],
        ),
        (
            "cut_to_splice",
            distribution_chart(
                &splice_bins(),
                &[
                    Marker::new(100.0, "P50 = 100 h"),
                    Marker::new(233.0, "P90 = 233 h"),
                    Marker::new(250.0, "P99 = 250 h"),
                ],
                &s5,
            )
            .unwrap(),
            vec![
                "How long is a ribbon cut",
                "Time from cut to splice (hours)",
                "P50 = 100 h",
                "P99 = 250 h",
            ],
        ),
        (
            "heatmap",
            heatmap(&grid(), &s6).unwrap(),
            vec![
                "Which designs keep",
                "Cross-link spacing (m)",
                "Ribbons per bay",
                "Loss probability over 20 years",
            ],
        ),
        (
            "pareto",
            pareto_chart(&designs(), &s7).unwrap(),
            vec!["lowest risk for their mass", "Tether mass (kg)", "Design D"],
        ),
    ]
}

fn decode(png_bytes: &[u8]) -> (u32, u32, Vec<u8>) {
    let decoder = png::Decoder::new(std::io::Cursor::new(png_bytes));
    let mut reader = decoder.read_info().expect("PNG header");
    let mut buf = vec![0; reader.output_buffer_size().expect("buffer size")];
    let info = reader.next_frame(&mut buf).expect("PNG frame");
    buf.truncate(info.buffer_size());
    (info.width, info.height, buf)
}

/// Number of distinct RGB colours in a decoded image.
fn colours(rgb: &[u8]) -> usize {
    let mut seen: Vec<[u8; 3]> = rgb.chunks_exact(3).map(|c| [c[0], c[1], c[2]]).collect();
    seen.sort_unstable();
    seen.dedup();
    seen.len()
}

fn maybe_write(name: &str, fig: &Figure) {
    if let Some(dir) = std::env::var_os("TETHER_RISK_PLOT_SAMPLES") {
        let dir = std::path::PathBuf::from(dir);
        std::fs::create_dir_all(&dir).unwrap();
        std::fs::write(dir.join(format!("{name}.png")), &fig.png).unwrap();
        std::fs::write(dir.join(format!("{name}.svg")), &fig.svg).unwrap();
    }
}

// Source: PNG specification (signature bytes and IHDR dimensions, checked by the png crate's
// decoder); 900 x 600 is this module's documented default canvas.
#[test]
fn every_chart_is_a_valid_non_blank_png_and_svg() {
    for (name, fig, words) in samples() {
        maybe_write(name, &fig);
        let (w, h, rgb) = decode(&fig.png);
        assert_eq!((w, h), (900, 600), "{name}");
        assert_eq!(rgb.len(), 900 * 600 * 3, "{name}");
        assert!(colours(&rgb) > 20, "{name}: image is nearly one colour");
        assert!(fig.svg.trim_start().starts_with("<svg"), "{name}");
        assert!(fig.svg.trim_end().ends_with("</svg>"), "{name}");
        for word in words {
            assert!(fig.svg.contains(word), "{name}: SVG lacks {word:?}");
        }
        // Only the log-axis samples hold a zero (year 0; design G), which they must note.
        let expected_notes = usize::from(name == "loss_log" || name == "pareto");
        assert_eq!(
            fig.notes.len(),
            expected_notes,
            "{name}: notes {:?}",
            fig.notes
        );
    }
}

// Source: the module's determinism promise (same input -> same bytes).
#[test]
fn rendering_twice_gives_identical_bytes() {
    let a = samples();
    let b = samples();
    for ((name, fa, _), (_, fb, _)) in a.iter().zip(&b) {
        assert!(fa.png == fb.png, "{name}: PNG differs");
        assert!(fa.svg == fb.svg, "{name}: SVG differs");
    }
}

// Source: the module's documented handling of degenerate input (typed error or note).
#[test]
fn degenerate_inputs_give_errors_or_notes() {
    let s = spec("Degenerate", "x (years)", "y (-)");
    // Empty data -> chart with a note.
    let f = survival_chart(&[], ProbabilityAxis::Survival, &s).unwrap();
    assert_eq!(f.notes.len(), 1);
    assert!(f.svg.contains("No data points"));
    let f = bar_chart(&[], &s).unwrap();
    assert_eq!(f.notes.len(), 1);
    let f = histogram_chart(&[], &[], &s).unwrap();
    assert_eq!(f.notes.len(), 1);
    let f = distribution_chart(&[], &[Marker::new(1.0, "P50")], &s).unwrap();
    assert_eq!(f.notes.len(), 1);
    let f = pareto_chart(&[], &s).unwrap();
    assert_eq!(f.notes.len(), 1);
    let f = heatmap(
        &HeatmapGrid {
            x_labels: vec![],
            y_labels: vec![],
            z: vec![],
            z_label: "z".into(),
        },
        &s,
    )
    .unwrap();
    assert_eq!(f.notes.len(), 1);

    // All zero.
    let zero = Series::new("zero", vec![0.0, 1.0, 2.0], vec![0.0, 0.0, 0.0]);
    let f = survival_chart(std::slice::from_ref(&zero), ProbabilityAxis::LossLog, &s).unwrap();
    maybe_write("degenerate_all_zero_loss", &f);
    assert!(f.notes.iter().any(|n| n.contains("zero")));
    let f = survival_chart(&[zero], ProbabilityAxis::Survival, &s).unwrap();
    assert!(f.notes.is_empty());
    let f = bar_chart(&[Bar::new("a", 0.0), Bar::new("b", 0.0)], &s).unwrap();
    assert!(f.notes.iter().any(|n| n.contains("zero")));
    let f = histogram_chart(
        &[PmfPoint {
            count: 0,
            probability: 0.0,
        }],
        &[],
        &s,
    )
    .unwrap();
    assert!(f.notes.iter().any(|n| n.contains("zero")));
    let zgrid = HeatmapGrid {
        x_labels: vec!["1".into()],
        y_labels: vec!["1".into()],
        z: vec![vec![0.0]],
        z_label: "z".into(),
    };
    assert!(heatmap(&zgrid, &s)
        .unwrap()
        .notes
        .iter()
        .any(|n| n.contains("zero")));
    let zpts = [ParetoPoint {
        label: "only".into(),
        mass_kg: 1.0,
        loss_probability: 0.0,
    }];
    assert!(pareto_chart(&zpts, &s)
        .unwrap()
        .notes
        .iter()
        .any(|n| n.contains("no observed loss")));

    // A single point.
    let one = Series::new("one", vec![5.0], vec![0.9]);
    assert!(survival_chart(&[one], ProbabilityAxis::Survival, &s)
        .unwrap()
        .notes
        .is_empty());
    let one = [ParetoPoint {
        label: "one".into(),
        mass_kg: 1e5,
        loss_probability: 1e-4,
    }];
    assert!(pareto_chart(&one, &s).unwrap().notes.is_empty());
    let f = distribution_chart(
        &[HistogramBin {
            lo: 3.0,
            hi: 3.0,
            height: 1.0,
        }],
        &[],
        &s,
    )
    .unwrap();
    maybe_write("degenerate_single_bin", &f);
    assert!(f.notes.is_empty());

    // NaN and out-of-range values -> typed errors.
    let nan = Series::new("nan", vec![0.0, f64::NAN], vec![1.0, 1.0]);
    assert!(matches!(
        survival_chart(&[nan], ProbabilityAxis::Survival, &s),
        Err(PlotError::NonFinite { index: 1, .. })
    ));
    let above = Series::new("above", vec![0.0], vec![1.5]);
    assert!(matches!(
        survival_chart(&[above], ProbabilityAxis::Survival, &s),
        Err(PlotError::OutOfRange { .. })
    ));
    let short = Series::new("short", vec![0.0, 1.0], vec![1.0]);
    assert!(matches!(
        survival_chart(&[short], ProbabilityAxis::Survival, &s),
        Err(PlotError::LengthMismatch { .. })
    ));
    assert!(matches!(
        bar_chart(&[Bar::new("a", f64::INFINITY)], &s),
        Err(PlotError::NonFinite { .. })
    ));
    assert!(matches!(
        histogram_chart(
            &[PmfPoint {
                count: 1,
                probability: f64::NAN
            }],
            &[],
            &s
        ),
        Err(PlotError::NonFinite { .. })
    ));
    assert!(matches!(
        distribution_chart(&splice_bins(), &[Marker::new(f64::NAN, "P50")], &s),
        Err(PlotError::NonFinite { .. })
    ));
    let bad = HeatmapGrid {
        x_labels: vec!["1".into()],
        y_labels: vec!["1".into()],
        z: vec![vec![-1.0]],
        z_label: "z".into(),
    };
    assert!(matches!(
        heatmap(&bad, &s),
        Err(PlotError::OutOfRange { .. })
    ));
    let ragged = HeatmapGrid {
        x_labels: vec!["1".into(), "2".into()],
        y_labels: vec!["1".into()],
        z: vec![vec![1.0]],
        z_label: "z".into(),
    };
    assert!(matches!(
        heatmap(&ragged, &s),
        Err(PlotError::LengthMismatch { .. })
    ));
    let nanp = [ParetoPoint {
        label: "x".into(),
        mass_kg: f64::NAN,
        loss_probability: 0.1,
    }];
    assert!(matches!(
        pareto_chart(&nanp, &s),
        Err(PlotError::NonFinite { .. })
    ));
    let tiny = spec("t", "x", "y").with_size_px(10, 10);
    assert!(matches!(
        bar_chart(&bars(), &tiny),
        Err(PlotError::InvalidSize { .. })
    ));
}

// Source: hand-made case. Masses and losses (kg, -): A (1,0.5) B (2,0.3) C (3,0.4)
// D (4,0.1) E (4,0.1): C is dominated by B; D and E are equal and both kept.
#[test]
fn pareto_front_hand_made() {
    let pts = [(1.0, 0.5), (2.0, 0.3), (3.0, 0.4), (4.0, 0.1), (4.0, 0.1)];
    assert_eq!(pareto_front(&pts), vec![0, 1, 3, 4]);
    // From the sample designs: D (2.0e5, 9e-5) dominates E (2.1e5, 1e-4); H and C are dominated.
    let d = designs();
    let xy: Vec<(f64, f64)> = d.iter().map(|p| (p.mass_kg, p.loss_probability)).collect();
    let names: Vec<&str> = pareto_front(&xy)
        .iter()
        .map(|&i| d[i].label.as_str())
        .collect();
    assert_eq!(
        names,
        ["Design A", "Design B", "Design D", "Design F", "Design G"]
    );
}

fn doc_with(figures: Vec<ReportFigure>, tables: Vec<ReportTable>) -> ReportDoc {
    ReportDoc {
        title: "Risk report <demo>".into(),
        subtitle: "Scenario: demo & friends".into(),
        caution: "Caution: estimates only.".into(),
        sections: vec![
            Section {
                heading: "Headline".into(),
                paragraphs: vec!["Loss is rare: P < 1e-3.".into()],
                cards: vec![KeyNumber {
                    label: "Loss probability".into(),
                    value: "3.1e-4".into(),
                    note: "95 % interval".into(),
                }],
                figures,
                tables: vec![],
            },
            Section {
                heading: "Tables".into(),
                tables,
                ..Default::default()
            },
        ],
    }
}

// Source: HTML5 escaping rules; the report must not contain a live <script> from data.
#[test]
fn html_escapes_table_cells_and_text() {
    let t = ReportTable {
        caption: "Cells".into(),
        headers: vec!["Name".into(), "Value".into()],
        rows: vec![vec!["<script>alert('x')</script>".into(), "1 & 2".into()]],
        numeric_columns: vec![1],
    };
    let html = render_report(&doc_with(vec![], vec![t]));
    assert!(!html.contains("<script"));
    assert!(html.contains("&lt;script&gt;alert(&#39;x&#39;)&lt;/script&gt;"));
    assert!(html.contains("1 &amp; 2"));
    assert!(html.contains("<title>Risk report &lt;demo&gt;</title>"));
    assert!(html.contains("P &lt; 1e-3"));
    // A figure carrying script is not inlined.
    let evil = ReportFigure {
        caption: "bad".into(),
        svg: "<svg><script>x()</script></svg>".into(),
    };
    let html = render_report(&doc_with(vec![evil], vec![]));
    assert!(!html.contains("<script"));
}

// Source: the brief for the report: every given figure and table appears, caution at top and
// bottom, no external resources.
#[test]
fn html_contains_every_figure_and_table_and_caution_twice() {
    let figs: Vec<ReportFigure> = samples()
        .into_iter()
        .map(|(name, f, _)| ReportFigure {
            caption: format!("Figure {name}"),
            svg: f.svg,
        })
        .collect();
    let tables: Vec<ReportTable> = (0..3)
        .map(|i| ReportTable {
            caption: format!("Table {i}"),
            headers: vec!["Bay".into(), "Cuts per year".into()],
            rows: vec![vec![format!("{i}"), "0.5".into()]],
            numeric_columns: vec![1],
        })
        .collect();
    let html = render_report(&doc_with(figs.clone(), tables));
    assert_eq!(html.matches("<svg").count(), figs.len());
    assert_eq!(html.matches("<figure>").count(), figs.len());
    for f in &figs {
        assert!(html.contains(&f.caption));
    }
    assert_eq!(html.matches("<table>").count(), 3);
    for i in 0..3 {
        assert!(html.contains(&format!("<caption>Table {i}</caption>")));
    }
    assert_eq!(html.matches("Caution: estimates only.").count(), 2);
    let first = html.find("Caution: estimates only.").unwrap();
    assert!(first < html.find("<main>").unwrap());
    assert!(html.rfind("Caution: estimates only.").unwrap() > html.find("</main>").unwrap());
    assert!(!html.contains("<script"));
    assert!(
        !html.contains("http://")
            || html.matches("http://").count()
                == html.matches("xmlns=\"http://www.w3.org/2000/svg\"").count()
    );
    assert!(!html.contains("https://"));
    assert!(!html.contains("<link"));
    if let Some(dir) = std::env::var_os("TETHER_RISK_PLOT_SAMPLES") {
        std::fs::write(std::path::PathBuf::from(dir).join("report.html"), &html).unwrap();
    }
}
