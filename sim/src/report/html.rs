//! A small HTML writer: every piece of text from an input file goes through [`escape`].

use std::fmt::Write;

/// `s` with the five HTML special characters replaced by entities (safe in text and in
/// quoted attribute values).
pub fn escape(s: &str) -> String {
    let mut o = String::with_capacity(s.len());
    for c in s.chars() {
        match c {
            '&' => o.push_str("&amp;"),
            '<' => o.push_str("&lt;"),
            '>' => o.push_str("&gt;"),
            '"' => o.push_str("&quot;"),
            '\'' => o.push_str("&#39;"),
            _ => o.push(c),
        }
    }
    o
}

/// An inline SVG from plotters made fit for an HTML page: the XML namespace attribute is
/// implied by HTML and dropped, so the page names no URL at all.
pub fn inline_svg(svg: &str) -> String {
    svg.replace(" xmlns=\"http://www.w3.org/2000/svg\"", "")
        .replace(" xmlns:xlink=\"http://www.w3.org/1999/xlink\"", "")
}

/// A number for a table cell: fixed decimals, or "—" when absent.
pub fn num(v: Option<f64>, decimals: usize) -> String {
    v.filter(|x| x.is_finite())
        .map_or_else(|| "—".to_string(), |x| format!("{x:.decimals$}"))
}

/// A table: header cells and rows of cells (cells are already HTML).
pub fn table(class: &str, head: &[&str], rows: &[Vec<String>]) -> String {
    let mut o = format!("<table class=\"{}\">\n<thead><tr>", escape(class));
    for h in head {
        let _ = write!(o, "<th>{}</th>", escape(h));
    }
    o.push_str("</tr></thead>\n<tbody>\n");
    for r in rows {
        o.push_str("<tr>");
        for c in r {
            let _ = write!(o, "<td>{c}</td>");
        }
        o.push_str("</tr>\n");
    }
    o.push_str("</tbody>\n</table>\n");
    o
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn escapes_markup_and_quotes() {
        assert_eq!(
            escape("<script>alert(\"x\")</script> & 'y'"),
            "&lt;script&gt;alert(&quot;x&quot;)&lt;/script&gt; &amp; &#39;y&#39;"
        );
        assert_eq!(escape("μ ± 0.1 °C"), "μ ± 0.1 °C");
    }

    #[test]
    fn inline_svg_names_no_url() {
        let s = inline_svg(
            "<svg width=\"1\" height=\"1\" viewBox=\"0 0 1 1\" xmlns=\"http://www.w3.org/2000/svg\">\n</svg>",
        );
        assert!(!s.contains("http"), "{s}");
        assert!(s.starts_with("<svg width"));
    }
}
