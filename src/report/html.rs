//! One self-contained HTML page per report: inline style, inline SVG charts,
//! no scripts and no network access needed to open it.

use super::CAUTION;
use super::text::Table;

/// A piece of a page.
pub enum Block {
    /// A section heading.
    Heading(String),
    /// A paragraph of plain text.
    Paragraph(String),
    /// Preformatted text (the scenario in plain words).
    Pre(String),
    /// A table; the first row is the header.
    Table(Table),
    /// An SVG chart, inlined as is.
    Svg(String),
    /// A bulleted list.
    List(Vec<String>),
}

/// Escape text for HTML.
pub fn escape(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    for c in text.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&#39;"),
            _ => out.push(c),
        }
    }
    out
}

const STYLE: &str = "body{font-family:system-ui,-apple-system,'Segoe UI',sans-serif;margin:2rem auto;max-width:72rem;\
padding:0 1rem;color:#1d2430;line-height:1.45}h1{font-size:1.5rem;margin-bottom:.2rem}h2{font-size:1.15rem;\
margin-top:2rem;border-bottom:1px solid #d5dbe3;padding-bottom:.2rem}table{border-collapse:collapse;margin:.6rem 0;\
font-size:.9rem}th,td{padding:.25rem .7rem;text-align:left;border-bottom:1px solid #e6eaf0;white-space:nowrap}\
th{background:#f1f4f8}pre{background:#f6f8fa;padding:.8rem;overflow-x:auto;font-size:.85rem}\
.caution{border-left:4px solid #c77700;background:#fff7e8;padding:.6rem .9rem;margin:1rem 0}\
.chart{margin:1rem 0;overflow-x:auto}.meta{color:#5b6675;font-size:.9rem}";

/// The whole page.
pub fn page(title: &str, subtitle: &str, blocks: &[Block]) -> String {
    let mut out = String::new();
    out.push_str("<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n");
    out.push_str("<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n");
    out.push_str(&format!(
        "<title>{}</title>\n<style>{STYLE}</style>\n</head>\n<body>\n",
        escape(title)
    ));
    out.push_str(&format!(
        "<h1>{}</h1>\n<p class=\"meta\">{}</p>\n",
        escape(title),
        escape(subtitle)
    ));
    out.push_str(&format!(
        "<div class=\"caution\"><strong>Caution.</strong> {}</div>\n",
        escape(CAUTION)
    ));
    for b in blocks {
        match b {
            Block::Heading(h) => out.push_str(&format!("<h2>{}</h2>\n", escape(h))),
            Block::Paragraph(p) => out.push_str(&format!("<p>{}</p>\n", escape(p))),
            Block::Pre(p) => out.push_str(&format!("<pre>{}</pre>\n", escape(p))),
            Block::List(items) => {
                out.push_str("<ul>\n");
                for i in items {
                    out.push_str(&format!("<li>{}</li>\n", escape(i)));
                }
                out.push_str("</ul>\n");
            }
            Block::Svg(svg) => {
                // The chart's own XML declaration is not allowed inline.
                let body = svg.find("<svg").map_or(svg.as_str(), |i| &svg[i..]);
                out.push_str(&format!("<div class=\"chart\">{body}</div>\n"));
            }
            Block::Table(t) => {
                if !t.title.is_empty() {
                    out.push_str(&format!("<h3>{}</h3>\n", escape(&t.title)));
                }
                out.push_str("<table>\n");
                for (i, row) in t.rows.iter().enumerate() {
                    let cell = if i == 0 { "th" } else { "td" };
                    out.push_str("<tr>");
                    for c in row {
                        out.push_str(&format!("<{cell}>{}</{cell}>", escape(c)));
                    }
                    out.push_str("</tr>\n");
                }
                out.push_str("</table>\n");
            }
        }
    }
    out.push_str(&format!(
        "<p class=\"meta\">Made by busyhour {}.</p>\n</body>\n</html>\n",
        env!("CARGO_PKG_VERSION")
    ));
    out
}

/// The assumptions every simulated report rests on.
pub fn assumptions() -> Vec<String> {
    vec![
        "Every simulated figure is the mean across independent replications with a 95% Student-t \
half-width; the true value lies outside that interval about one time in twenty."
            .into(),
        "Calls are counted when their first attempt arrives in the measured period (after the \
warm-up) and followed to their end; time figures are averaged over the measured period."
            .into(),
        "Arrival processes, holding-time laws, patience, redial behaviour and routes are exactly \
those written in the scenario; the model knows nothing that is not in the file."
            .into(),
        "A closed-form value is shown only where its textbook assumptions hold for the model; a \
name such as \"approx.\" or \"no redials\" says where it is only a reference."
            .into(),
    ]
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn pages_escape_text_and_inline_svg() {
        let p = page(
            "a <b> & c",
            "sub",
            &[
                Block::Table(Table {
                    title: "t".into(),
                    rows: vec![vec!["x<y".into()], vec!["1".into()]],
                }),
                Block::Svg("<?xml version=\"1.0\"?>\n<svg width=\"1\"></svg>".into()),
            ],
        );
        assert!(p.contains("<title>a &lt;b&gt; &amp; c</title>"));
        assert!(p.contains("<th>x&lt;y</th>"));
        assert!(p.contains("<div class=\"chart\"><svg width=\"1\"></svg></div>"));
        assert!(!p.contains("<?xml"));
        assert!(!p.contains("<script"));
    }
}
