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
    let rows: Vec<Vec<String>> = c.regions.iter().map(|(k, e)| error_row(k, e)).collect();
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
                "tables checksum (CRC-32)".into(),
                format!("<code>0x{:08X}</code>", d.tables_checksum),
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

    let _ = writeln!(
        o,
        "<footer><p>{} — {}</p></footer>\n</body>\n</html>",
        escape(&d.tool),
        escape(CAUTION)
    );
    Ok(o)
}
