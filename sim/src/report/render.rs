//! The report as one HTML page (see [`super`] for what it holds and why it is self-contained).

use std::fmt::Write;

use super::html::{escape, inline_svg, num, table};
use super::{EstimateSection, ReportData};
use crate::compare::ErrorReport;
use crate::error::SimError;
use crate::plot::{surface_svg, time_series_svg};
use crate::replay::CAUTION;

/// Ids of the page's sections, in order (tests and readers can rely on them).
pub const SECTIONS: [&str; 8] = [
    "caution",
    "device",
    "provenance",
    "comparison",
    "holding-gate",
    "flags",
    "plots",
    "coverage",
];

const STYLE: &str = "body{font-family:'DejaVu Sans',Verdana,sans-serif;margin:2em;color:#222;max-width:1500px}\
h1{font-size:1.6em}h2{border-bottom:2px solid #888;margin-top:2em}h3{margin-top:1.5em}\
table{border-collapse:collapse;margin:0.5em 0 1em}th,td{border:1px solid #bbb;padding:3px 8px;text-align:right}\
th{background:#eee}td:first-child,th:first-child{text-align:left}\
.caution{border:3px solid #b00;background:#fff3f3;padding:0.8em 1.2em;font-weight:bold}\
.pass{color:#070;font-weight:bold}.fail{color:#b00;font-weight:bold}\
code{font-size:0.95em}.plot svg{max-width:100%;height:auto;border:1px solid #ddd}";

fn error_row(label: &str, e: &ErrorReport) -> Vec<String> {
    vec![
        escape(label),
        e.n.to_string(),
        num(Some(e.bias_nm), 1),
        num(Some(e.rms_nm), 1),
        num(Some(e.max_abs_nm), 1),
        num(Some(e.p95_nm), 1),
        num(Some(e.p99_nm), 1),
    ]
}

const ERROR_HEAD: [&str; 7] = [
    "rows",
    "n",
    "bias [N·m]",
    "RMS [N·m]",
    "max |error| [N·m]",
    "P95 |error| [N·m]",
    "P99 |error| [N·m]",
];

fn comparison(o: &mut String, s: &EstimateSection) {
    let c = &s.compare;
    let _ = writeln!(o, "<h3>{}</h3>", escape(&s.provenance.file));
    let _ = writeln!(
        o,
        "<p>error = estimate − reference over the rows that have both ({} of {} rows in the window; {} without a reference, {} without an estimate). Quantiles: {}.</p>",
        c.overall.as_ref().map_or(0, |e| e.n),
        c.rows,
        c.no_reference,
        c.unavailable,
        escape(&c.quantile_method)
    );
    let mut rows = Vec::new();
    if let Some(e) = &c.overall {
        rows.push(error_row("overall", e));
    }
    if let Some(e) = &c.slipping {
        rows.push(error_row("slipping only", e));
    }
    o.push_str(&table("errors", &ERROR_HEAD, &rows));
    o.push_str("<h4>By region and state</h4>\n");
    let rows: Vec<Vec<String>> = c
        .regions
        .iter()
        .map(|r| error_row(&r.region, &r.report))
        .collect();
    if rows.is_empty() {
        o.push_str("<p>No rows with both an estimate and a reference.</p>\n");
    } else {
        o.push_str(&table("regions", &ERROR_HEAD, &rows));
    }
    o.push_str("<h4>Rows per state</h4>\n");
    let rows: Vec<Vec<String>> = c
        .by_state
        .iter()
        .map(|(k, v)| {
            vec![
                escape(k),
                v.rows.to_string(),
                v.with_reference.to_string(),
                v.with_error.to_string(),
            ]
        })
        .collect();
    o.push_str(&table(
        "states",
        &[
            "state",
            "rows",
            "with a reference",
            "in the error statistics",
        ],
        &rows,
    ));
}

fn holding_gate(s: &EstimateSection) -> Vec<String> {
    let h = &s.compare.holding;
    let outside = h.n - h.within_capacity;
    let verdict = if h.n == 0 {
        "<span>no holding rows with a reference</span>".to_string()
    } else if outside == 0 {
        "<span class=\"pass\">reference within ±capacity on every holding row</span>".to_string()
    } else {
        format!("<span class=\"fail\">reference outside ±capacity on {outside} holding rows</span>")
    };
    vec![
        escape(&s.provenance.file),
        h.n.to_string(),
        outside.to_string(),
        num(h.min_margin_nm, 1),
        verdict,
    ]
}

fn flags(o: &mut String, s: &EstimateSection) {
    let _ = writeln!(o, "<h3>{}</h3>", escape(&s.provenance.file));
    if s.flags.is_empty() {
        o.push_str("<p>No flag was raised in the window.</p>\n");
        return;
    }
    let rows: Vec<Vec<String>> = s
        .flags
        .iter()
        .map(|f| {
            let mut when: Vec<String> = f
                .listed
                .iter()
                .map(|(a, b)| format!("{a:.3}–{b:.3}"))
                .collect();
            if f.intervals > f.listed.len() as u64 {
                when.push(format!("… {} more", f.intervals - f.listed.len() as u64));
            }
            vec![
                format!("<code>{}</code>", escape(f.name)),
                f.rows.to_string(),
                f.intervals.to_string(),
                num(Some(f.raised_s), 3),
                escape(&when.join(", ")),
            ]
        })
        .collect();
    o.push_str(&table(
        "flags",
        &[
            "flag",
            "rows raised",
            "times raised",
            "raised for [s]",
            "when [s]",
        ],
        &rows,
    ));
}

/// The whole page.
///
/// # Errors
/// Plotting errors.
pub fn document(d: &ReportData) -> Result<String, SimError> {
    let mut o = String::with_capacity(1 << 20);
    let title = format!("clampwise report — {}", d.device);
    let _ = write!(
        o,
        "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n<title>{}</title>\n<style>{STYLE}</style>\n</head>\n<body>\n<h1>{}</h1>\n",
        escape(&title),
        escape(&title)
    );

    let _ = writeln!(
        o,
        "<section id=\"caution\"><h2>Caution</h2>\n<p class=\"caution\">{} This report shows estimates from recorded data only; validate on the bench for each lining and geometry.</p></section>",
        escape(CAUTION)
    );

    device_section(&mut o, d);

    inputs_section(&mut o, d);

    o.push_str("<section id=\"comparison\"><h2>Comparison with the reference torque</h2>\n");
    for s in &d.estimates {
        comparison(&mut o, s);
    }
    o.push_str("</section>\n");

    o.push_str("<section id=\"holding-gate\"><h2>Holding gate</h2>\n<p>While holding, no torque is estimated: the load sets it, within ±capacity. The gate counts the holding rows whose reference torque lies outside ±capacity; the margin is capacity − |reference| (negative: outside).</p>\n");
    let rows: Vec<Vec<String>> = d.estimates.iter().map(holding_gate).collect();
    o.push_str(&table(
        "holding",
        &[
            "file",
            "holding rows with a reference",
            "outside ±capacity",
            "worst margin [N·m]",
            "verdict",
        ],
        &rows,
    ));
    o.push_str("</section>\n");

    o.push_str("<section id=\"flags\"><h2>Flag timelines</h2>\n<p>When each flag of the estimator was raised (intervals of consecutive rows, from the first raised row to the first clear one).</p>\n");
    for s in &d.estimates {
        flags(&mut o, s);
    }
    o.push_str("</section>\n");

    plots_section(&mut o, d)?;

    coverage_section(&mut o, d)?;

    let _ = writeln!(
        o,
        "<footer><p>{} — {}</p></footer>\n</body>\n</html>",
        escape(&d.tool),
        escape(CAUTION)
    );
    Ok(o)
}

/// The device, the config and its checksums, the tool and the time window.
fn device_section(o: &mut String, d: &ReportData) {
    o.push_str("<section id=\"device\"><h2>Device and tool</h2>\n");
    let window = match (d.window.from_s, d.window.to_s) {
        (None, None) => "whole files".to_string(),
        (f, t) => format!(
            "{} s … {} s",
            f.map_or("start".into(), |v| v.to_string()),
            t.map_or("end".into(), |v| v.to_string())
        ),
    };
    o.push_str(&table(
        "device",
        &["item", "value"],
        &[
            vec!["device".into(), escape(&d.device)],
            vec!["kind".into(), escape(&d.device_kind)],
            vec!["config file".into(), escape(&d.config.file)],
            vec![
                "config SHA-256".into(),
                format!("<code>{}</code>", escape(&d.config.sha256)),
            ],
            vec![
                "device checksum (CRC-32, the firmware's DEVICE_CHECKSUM)".into(),
                format!("<code>0x{:08X}</code>", d.device_checksum),
            ],
            vec!["tool".into(), escape(&d.tool)],
            vec![
                "estimator".into(),
                format!("<code>{}</code>", escape(&d.estimator)),
            ],
            vec!["time window".into(), escape(&window)],
        ],
    ));
    o.push_str("</section>\n");
}

/// Every input file: size, rows, time span and SHA-256.
fn inputs_section(o: &mut String, d: &ReportData) {
    o.push_str("<section id=\"provenance\"><h2>Inputs</h2>\n");
    let mut rows: Vec<Vec<String>> = d
        .estimates
        .iter()
        .map(|s| {
            vec![
                escape(&s.provenance.file),
                "estimate".into(),
                s.provenance.bytes.to_string(),
                s.rows.to_string(),
                s.rows_in_window.to_string(),
                s.time_span_s
                    .map_or("—".into(), |(a, b)| format!("{a:.3} … {b:.3}")),
                format!("<code>{}</code>", escape(&s.provenance.sha256)),
            ]
        })
        .collect();
    if let Some(c) = &d.coverage {
        rows.push(vec![
            escape(&c.provenance.file),
            "fit coverage".into(),
            c.provenance.bytes.to_string(),
            c.cells.len().to_string(),
            "—".into(),
            "—".into(),
            format!("<code>{}</code>", escape(&c.provenance.sha256)),
        ]);
    }
    o.push_str(&table(
        "inputs",
        &[
            "file",
            "kind",
            "bytes",
            "rows",
            "rows in window",
            "time span [s]",
            "SHA-256",
        ],
        &rows,
    ));
    o.push_str("</section>\n");
}

/// One time-series plot per estimate file.
fn plots_section(o: &mut String, d: &ReportData) -> Result<(), SimError> {
    o.push_str("<section id=\"plots\"><h2>Plots</h2>\n<p>Each pixel column shows the smallest and largest value of the rows it covers, so short events stay visible.</p>\n");
    for s in &d.estimates {
        let svg = time_series_svg(
            &s.envelope,
            &format!("{} — {}", d.device, s.provenance.file),
        )?;
        let _ = writeln!(
            o,
            "<figure class=\"plot\">{}<figcaption>{}</figcaption></figure>",
            inline_svg(&svg),
            escape(&s.provenance.file)
        );
    }
    o.push_str("</section>\n");
    Ok(())
}

/// The fit's coverage: the entries reached, and the coverage map.
fn coverage_section(o: &mut String, d: &ReportData) -> Result<(), SimError> {
    o.push_str("<section id=\"coverage\"><h2>Fit coverage</h2>\n");
    match &d.coverage {
        None => o.push_str("<p>No coverage map given (<code>--coverage-csv</code>, written by <code>clampwise fit</code>).</p>\n"),
        Some(c) => {
            let unreached: Vec<String> = c
                .cells
                .iter()
                .filter(|x| !x.reached)
                .map(|x| format!("{} °C × {} rad/s", x.temperature_c, x.slip_speed_rad_s))
                .collect();
            let _ = writeln!(
                o,
                "<p>{}: {} of {} entries reached; not reached (prior kept): {}.</p>",
                escape(&c.provenance.file),
                c.cells.len() - unreached.len(),
                c.cells.len(),
                if unreached.is_empty() {
                    "none".to_string()
                } else {
                    escape(&unreached.join("; "))
                }
            );
            let svg = surface_svg(&c.cells, c.nt, c.nv)?;
            let _ = writeln!(o, "<figure class=\"plot\">{}</figure>", inline_svg(&svg));
        }
    }
    o.push_str("</section>\n");
    Ok(())
}

#[cfg(test)]
mod tests {
    #![allow(clippy::indexing_slicing, clippy::unwrap_used, clippy::float_cmp)]
    use super::*;
    use crate::compare::{Comparer, GateSpec};
    use crate::fit::CellReport;
    use crate::plot::{BUCKETS, Envelope, TimeWindow};
    use crate::report::timeline::Timeline;
    use crate::report::{CoverageSection, Provenance};
    use clampwise_convert::{ContactState, EstimateRow, Flags};

    const HOSTILE: &str = "<script>alert('x')</script>&\"<img src=x onerror=y>";

    fn row(i: u32) -> EstimateRow {
        let t = f64::from(i) * 0.01;
        let holding = i % 400 < 100;
        EstimateRow {
            line: u64::from(i) + 2,
            t_s: t,
            torque_nm: (!holding).then_some(-2000.0),
            capacity_nm: Some(3000.0),
            uncertainty_nm: 150.0,
            mu: 0.4,
            radius_m: 0.3,
            clamp_force_n: 20_000.0,
            slip_speed_rad_s: if holding { 0.0 } else { 3.0 },
            lining_temp_c: 60.0,
            bedding: 0.0,
            wear_m: 0.0,
            correction: 1.0,
            state: if holding {
                ContactState::Holding
            } else {
                ContactState::Slipping
            },
            flags: if (700..710).contains(&i) {
                Flags::all().iter().next().unwrap()
            } else {
                Flags::empty()
            },
            // Holding rows at i % 400 ≥ 90 have a reference beyond the capacity.
            torque_ref_nm: Some(if holding && i % 400 >= 90 {
                3500.0
            } else {
                -1980.0
            }),
        }
    }

    fn data() -> ReportData {
        let mut cmp = Comparer::new(None, GateSpec::default());
        let mut tl = Timeline::default();
        let mut env = Envelope::new(BUCKETS, TimeWindow::default());
        for i in 0..2000 {
            let r = row(i);
            cmp.add(&r);
            tl.add(&r);
            env.push(&r, None);
        }
        let prov = |f: &str| Provenance {
            file: f.to_string(),
            bytes: 1,
            sha256: "00".repeat(32),
        };
        ReportData {
            device: format!("rig {HOSTILE}"),
            device_kind: "HoldingBrake".into(),
            config: prov("cfg.toml"),
            device_checksum: 0xDEAD_BEEF,
            tool: "clampwise 0.1.0".into(),
            estimator: "e".into(),
            window: TimeWindow::default(),
            estimates: vec![super::super::EstimateSection {
                provenance: prov(&format!("run {HOSTILE}.csv")),
                rows: 2000,
                rows_in_window: 2000,
                time_span_s: Some((0.0, 19.99)),
                compare: cmp.report(&format!("run {HOSTILE}.csv")),
                flags: tl.finish(),
                envelope: env,
            }],
            coverage: Some(CoverageSection {
                provenance: prov("coverage.csv"),
                cells: (0..4)
                    .map(|k| CellReport {
                        i: k / 2,
                        j: k % 2,
                        temperature_c: 20.0 + 100.0 * (k / 2) as f64,
                        slip_speed_rad_s: (k % 2) as f64,
                        coverage: 100.0 * k as f64,
                        reached: k != 0,
                        prior: 0.4,
                        fitted: 0.38,
                        std_error: None,
                    })
                    .collect(),
                nt: 2,
                nv: 2,
            }),
        }
    }

    /// Opening and closing tags of the page's own elements balance, in order.
    fn balanced(html: &str) -> Result<(), String> {
        let void = ["meta", "br", "hr", "img", "link", "input", "!DOCTYPE"];
        let mut stack: Vec<String> = Vec::new();
        let mut rest = html;
        while let Some(p) = rest.find('<') {
            rest = &rest[p + 1..];
            let end = rest.find('>').ok_or("unclosed <")?;
            let tag = &rest[..end];
            rest = &rest[end + 1..];
            if tag.ends_with('/') {
                continue;
            }
            let name: String = tag
                .trim_start_matches('/')
                .chars()
                .take_while(|c| !c.is_whitespace())
                .collect();
            if void.contains(&name.as_str()) {
                continue;
            }
            if tag.starts_with('/') {
                match stack.pop() {
                    Some(open) if open == name => {}
                    other => return Err(format!("</{name}> closes {other:?}")),
                }
            } else {
                stack.push(name);
            }
        }
        if stack.is_empty() {
            Ok(())
        } else {
            Err(format!("left open: {stack:?}"))
        }
    }

    #[test]
    fn page_is_well_formed_and_has_every_section() {
        let html = document(&data()).unwrap();
        assert!(html.starts_with("<!DOCTYPE html>"));
        balanced(&html).unwrap();
        for id in SECTIONS {
            assert!(html.contains(&format!("<section id=\"{id}\">")), "{id}");
        }
        assert!(html.contains("not a certified safety function"));
        assert!(html.contains("ISO 26262") && html.contains("IEC 61508"));
        assert!(html.contains("0xDEADBEEF"));
        // Two inline plots: the time series and the coverage map.
        assert_eq!(html.matches("<svg").count(), 2);
    }

    #[test]
    fn input_text_is_escaped_and_nothing_is_fetched_or_run() {
        let html = document(&data()).unwrap();
        let lower = html.to_ascii_lowercase();
        assert!(!lower.contains("<script"), "a script element");
        assert!(!lower.contains("http://") && !lower.contains("https://"));
        for t in [
            "<img", "<link", "<iframe", "<object", "<embed", "url(", "@import",
        ] {
            assert!(!lower.contains(t), "{t}");
        }
        assert!(!lower.contains("href="));
        assert!(html.contains(
            "run &lt;script&gt;alert(&#39;x&#39;)&lt;/script&gt;&amp;&quot;&lt;img src=x onerror=y&gt;"
        ));
    }

    /// The holding gate counts holding rows beyond ±capacity and the worst margin.
    #[test]
    fn holding_gate_numbers() {
        let d = data();
        let h = &d.estimates[0].compare.holding;
        // [calc] 2000 rows, holding where i mod 400 < 100: 5 × 100 rows; beyond the capacity
        // where i mod 400 ≥ 90: 5 × 10 rows; margin 3000 − 3500 = −500 N·m.
        assert_eq!(h.n, 500);
        assert_eq!(h.n - h.within_capacity, 50);
        assert_eq!(h.min_margin_nm, Some(-500.0));
        let html = document(&d).unwrap();
        assert!(html.contains("reference outside ±capacity on 50 holding rows"));
        assert!(html.contains("<td>-500.0</td>"));
    }

    #[test]
    fn flag_timeline_lists_the_interval() {
        let html = document(&data()).unwrap();
        let (name, _) = Flags::all().iter_names().next().unwrap();
        assert!(html.contains(&format!("<code>{name}</code>")));
        // [calc] raised at rows 700–709, 0.01 s apart: 7.000 s until the first clear row 7.100 s.
        assert!(html.contains("7.000–7.100"), "flag interval");
    }
}
