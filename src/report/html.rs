//! One self-contained HTML page per report: inline style, inline SVG charts,
//! no scripts and no network access needed to open it.

use super::CAUTION;
use super::text::Table;
use std::sync::OnceLock;

/// Where the pages of this process come from: when and by which command
/// line. Set once by the binary ([`set_origin`]); a page made without it
/// (library use, unit tests) has no such line.
static ORIGIN: OnceLock<Origin> = OnceLock::new();

/// When and how a report was made.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Origin {
    /// UTC time, ISO 8601: "2026-12-03T11:42:07Z".
    pub made_at: String,
    /// The command line, shell-quoted: "busyhour run 'a b.toml' --report r.html".
    pub command: String,
}

impl Origin {
    /// The origin of a process run as `args` (the program first, written
    /// as `busyhour`) at `unix_s` seconds since 1970 (UTC).
    pub fn new(args: &[String], unix_s: i64) -> Origin {
        let command = std::iter::once("busyhour".to_string())
            .chain(args.iter().skip(1).map(|a| shell_quote(a)))
            .collect::<Vec<_>>()
            .join(" ");
        Origin {
            made_at: iso_utc(unix_s),
            command,
        }
    }
}

/// Record the origin every page of this process carries (the first call
/// wins).
pub fn set_origin(origin: Origin) {
    let _ = ORIGIN.set(origin);
}

/// `unix_s` as ISO 8601 UTC, to the second.
pub fn iso_utc(unix_s: i64) -> String {
    let day = unix_s.div_euclid(86_400);
    let s = unix_s.rem_euclid(86_400);
    format!(
        "{}T{:02}:{:02}:{:02}Z",
        crate::records::time::Date(day),
        s / 3600,
        s / 60 % 60,
        s % 60
    )
}

/// A word as a POSIX shell reads it back: as is when it holds only safe
/// characters, else in single quotes (a quote inside written `'\''`).
pub fn shell_quote(word: &str) -> String {
    let safe = |c: char| c.is_ascii_alphanumeric() || "_-./:=@%+,".contains(c);
    if !word.is_empty() && word.chars().all(safe) {
        word.to_string()
    } else {
        format!("'{}'", word.replace('\'', "'\\''"))
    }
}

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
.chart{margin:1rem 0;overflow-x:auto}.chart svg{max-width:100%;height:auto}.meta{color:#5b6675;font-size:.9rem}";

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
    if let Some(o) = ORIGIN.get() {
        out.push_str(&format!(
            "<p class=\"meta\">Made {} (UTC) by <code>{}</code></p>\n",
            escape(&o.made_at),
            escape(&o.command)
        ));
    }
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

/// The page of a simulated report ([`page`]): its blocks, then the
/// assumptions every simulated report rests on, and the report's own
/// `more` after them. The one home of that closing section.
pub fn simulated_page(
    title: &str,
    subtitle: &str,
    mut blocks: Vec<Block>,
    more: &[&str],
) -> String {
    blocks.push(Block::Heading("Assumptions".into()));
    let mut list = assumptions();
    list.extend(more.iter().map(|m| m.to_string()));
    blocks.push(Block::List(list));
    page(title, subtitle, &blocks)
}

/// The assumptions every simulated report rests on.
fn assumptions() -> Vec<String> {
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

    #[test]
    fn origin_is_iso_utc_and_a_shell_quoted_command_line() {
        // 2026-12-03 is day 20,790 since 1970-01-01 (Python: (date(2026, 12, 3) - date(1970, 1, 1)).days).
        assert_eq!(iso_utc(0), "1970-01-01T00:00:00Z");
        assert_eq!(
            iso_utc(20_790 * 86_400 + 11 * 3600 + 42 * 60 + 7),
            "2026-12-03T11:42:07Z"
        );
        assert_eq!(iso_utc(-1), "1969-12-31T23:59:59Z");
        let args: Vec<String> = [
            "/x/target/busyhour",
            "size",
            "a b.toml",
            "--goal",
            "loss<=1%",
            "it's",
        ]
        .map(String::from)
        .to_vec();
        assert_eq!(
            Origin::new(&args, 0).command,
            "busyhour size 'a b.toml' --goal 'loss<=1%' 'it'\\''s'"
        );
        assert_eq!(shell_quote(""), "''");
    }
}
