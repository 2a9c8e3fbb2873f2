//! A tiny document model for the report's words, rendered twice: as HTML
//! (index.html) and as Markdown (summary.md), so both say the same thing.
//!
//! Owns: the block and span types, HTML escaping, Markdown escaping, and
//! the two renderers. May use: nothing but `std`.

/// A run of text inside a paragraph.
#[derive(Debug, Clone, PartialEq)]
pub enum Span {
    Text(String),
    Strong(String),
    /// A name from the scenario (part type, policy), set in code type.
    Code(String),
    /// A link to another file of the report (a plain file name).
    File(String),
}

/// Shorthands for building spans.
pub fn t(s: impl Into<String>) -> Span {
    Span::Text(s.into())
}
pub fn b(s: impl Into<String>) -> Span {
    Span::Strong(s.into())
}
pub fn c(s: impl Into<String>) -> Span {
    Span::Code(s.into())
}

/// A table column's alignment.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Align {
    Left,
    Right,
}

/// A figure: an SVG drawn by `plots`, also written as its own file.
#[derive(Debug, Clone, PartialEq)]
pub struct Figure {
    pub file: String,
    pub svg: String,
    pub caption: String,
    /// Short description for screen readers.
    pub alt: String,
}

/// A block of the document.
#[derive(Debug, Clone, PartialEq)]
pub enum Block {
    /// Level 1 to 3, text, anchor id.
    Heading(u8, String, String),
    Para(Vec<Span>),
    Bullets(Vec<Vec<Span>>),
    Table {
        head: Vec<String>,
        align: Vec<Align>,
        rows: Vec<Vec<String>>,
    },
    Figure(Figure),
    /// A highlighted box of blocks ("in short", cautions).
    Boxed(String, Vec<Block>),
    /// A paragraph in small type (notes under tables and figures).
    Note(Vec<Span>),
}

/// Escape text for HTML element content and double-quoted attributes.
pub fn html_escape(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    for ch in s.chars() {
        match ch {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&#39;"),
            _ => out.push(ch),
        }
    }
    out
}

/// Escape text for Markdown prose: the characters that start emphasis,
/// links, code, HTML or table cells. Underscores inside words are left
/// alone (CommonMark does not read them as emphasis).
pub fn md_escape(s: &str) -> String {
    let chars: Vec<char> = s.chars().collect();
    let mut out = String::with_capacity(s.len());
    for (i, &ch) in chars.iter().enumerate() {
        let word = |j: Option<usize>| {
            j.and_then(|j| chars.get(j))
                .is_some_and(|c| c.is_alphanumeric())
        };
        let escape = match ch {
            '\\' | '*' | '`' | '[' | ']' | '<' | '>' | '|' | '#' => true,
            '_' => !(word(i.checked_sub(1)) && word(Some(i + 1))),
            _ => false,
        };
        if escape {
            out.push('\\');
        }
        out.push(ch);
    }
    out
}

/// A Markdown code span holding `s` whatever backticks it contains.
fn md_code(s: &str) -> String {
    let mut run = 0;
    let mut longest = 0;
    for ch in s.chars() {
        if ch == '`' {
            run += 1;
            longest = longest.max(run);
        } else {
            run = 0;
        }
    }
    let fence = "`".repeat(longest + 1);
    let pad = if longest > 0 || s.starts_with(' ') || s.ends_with(' ') {
        " "
    } else {
        ""
    };
    // A pipe would end a table cell even inside a code span.
    let body = s.replace('|', "\\|");
    format!("{fence}{pad}{body}{pad}{fence}")
}

fn spans_html(spans: &[Span]) -> String {
    spans
        .iter()
        .map(|s| match s {
            Span::Text(x) => html_escape(x),
            Span::Strong(x) => format!("<strong>{}</strong>", html_escape(x)),
            Span::Code(x) => format!("<code>{}</code>", html_escape(x)),
            Span::File(x) => format!("<a href=\"{0}\">{0}</a>", html_escape(x)),
        })
        .collect()
}

fn spans_md(spans: &[Span]) -> String {
    spans
        .iter()
        .map(|s| match s {
            Span::Text(x) => md_escape(x),
            Span::Strong(x) => format!("**{}**", md_escape(x)),
            Span::Code(x) => md_code(x),
            Span::File(x) => format!("[{}](<{}>)", md_escape(x), x.replace(['<', '>'], "")),
        })
        .collect()
}

/// Prepare an SVG document from plotters for inline use in HTML: drop the
/// XML namespace attribute (HTML parsers put `<svg>` in the SVG namespace
/// themselves, and the page must name no network address), drop the fixed
/// width and height (CSS sizes it from its viewBox), and label it for
/// screen readers.
pub fn inline_svg(svg: &str, alt: &str) -> String {
    let Some(start) = svg.find("<svg") else {
        return String::new();
    };
    let svg = &svg[start..];
    let Some(end) = svg.find('>') else {
        return String::new();
    };
    let (open, rest) = svg.split_at(end);
    let mut attrs = String::new();
    for attr in split_attrs(&open[4..]) {
        let name = attr.split('=').next().unwrap_or("").trim();
        if matches!(name, "xmlns" | "width" | "height") || name.starts_with("xmlns:") {
            continue;
        }
        attrs.push(' ');
        attrs.push_str(attr);
    }
    format!(
        "<svg{attrs} role=\"img\" aria-label=\"{}\" preserveAspectRatio=\"xMidYMid meet\"{rest}",
        html_escape(alt)
    )
}

/// Split `a="x" b="y z"` into its attributes.
fn split_attrs(s: &str) -> Vec<&str> {
    let mut out = Vec::new();
    let bytes = s.as_bytes();
    let mut i = 0;
    while i < bytes.len() {
        while i < bytes.len() && bytes[i].is_ascii_whitespace() {
            i += 1;
        }
        let start = i;
        let mut quoted = false;
        while i < bytes.len() && (quoted || !bytes[i].is_ascii_whitespace()) {
            if bytes[i] == b'"' {
                quoted = !quoted;
            }
            i += 1;
        }
        if i > start {
            out.push(&s[start..i]);
        }
    }
    out
}

/// Render blocks as HTML (the body only).
pub fn to_html(blocks: &[Block]) -> String {
    let mut s = String::new();
    for block in blocks {
        block_html(block, &mut s);
    }
    s
}

fn block_html(block: &Block, s: &mut String) {
    match block {
        Block::Heading(level, text, id) => {
            let l = (*level).clamp(1, 3);
            s.push_str(&format!(
                "<h{l} id=\"{}\">{}</h{l}>\n",
                html_escape(id),
                html_escape(text)
            ));
        }
        Block::Para(spans) => s.push_str(&format!("<p>{}</p>\n", spans_html(spans))),
        Block::Note(spans) => s.push_str(&format!("<p class=\"note\">{}</p>\n", spans_html(spans))),
        Block::Bullets(items) => {
            s.push_str("<ul>\n");
            for item in items {
                s.push_str(&format!("<li>{}</li>\n", spans_html(item)));
            }
            s.push_str("</ul>\n");
        }
        Block::Table { head, align, rows } => {
            let class = |i: usize| match align.get(i) {
                Some(Align::Right) => " class=\"num\"",
                _ => "",
            };
            s.push_str("<div class=\"table\"><table>\n<thead><tr>");
            for (i, h) in head.iter().enumerate() {
                s.push_str(&format!(
                    "<th scope=\"col\"{}>{}</th>",
                    class(i),
                    html_escape(h)
                ));
            }
            s.push_str("</tr></thead>\n<tbody>\n");
            for row in rows {
                s.push_str("<tr>");
                for (i, cell) in row.iter().enumerate() {
                    s.push_str(&format!("<td{}>{}</td>", class(i), html_escape(cell)));
                }
                s.push_str("</tr>\n");
            }
            s.push_str("</tbody></table></div>\n");
        }
        Block::Figure(f) => {
            s.push_str(&format!(
                "<figure>\n<div class=\"plot\">{}</div>\n<figcaption>{} <span class=\"file\">({})</span></figcaption>\n</figure>\n",
                inline_svg(&f.svg, &f.alt),
                html_escape(&f.caption),
                html_escape(&f.file)
            ));
        }
        Block::Boxed(title, inner) => {
            let class = if title.starts_with("Caution") {
                "box caution"
            } else {
                "box"
            };
            s.push_str(&format!(
                "<section class=\"{class}\">\n<h2>{}</h2>\n",
                html_escape(title)
            ));
            for b in inner {
                block_html(b, s);
            }
            s.push_str("</section>\n");
        }
    }
}

/// Render blocks as Markdown. Figures become a line naming their file.
pub fn to_markdown(blocks: &[Block]) -> String {
    let mut s = String::new();
    for block in blocks {
        block_md(block, &mut s);
    }
    while s.ends_with("\n\n") {
        s.pop();
    }
    s
}

fn block_md(block: &Block, s: &mut String) {
    match block {
        Block::Heading(level, text, _) => {
            let l = (*level).clamp(1, 3) as usize;
            s.push_str(&format!("{} {}\n\n", "#".repeat(l), md_escape(text)));
        }
        Block::Para(spans) | Block::Note(spans) => {
            s.push_str(&spans_md(spans));
            s.push_str("\n\n");
        }
        Block::Bullets(items) => {
            for item in items {
                s.push_str(&format!("- {}\n", spans_md(item)));
            }
            s.push('\n');
        }
        Block::Table { head, align, rows } => {
            let cell = |x: &str| md_escape(x);
            s.push_str(&format!(
                "| {} |\n",
                head.iter().map(|h| cell(h)).collect::<Vec<_>>().join(" | ")
            ));
            s.push_str(&format!(
                "|{}|\n",
                (0..head.len())
                    .map(|i| match align.get(i) {
                        Some(Align::Right) => "---:",
                        _ => "---",
                    })
                    .collect::<Vec<_>>()
                    .join("|")
            ));
            for row in rows {
                s.push_str(&format!(
                    "| {} |\n",
                    row.iter().map(|x| cell(x)).collect::<Vec<_>>().join(" | ")
                ));
            }
            s.push('\n');
        }
        Block::Figure(f) => {
            s.push_str(&format!(
                "*Figure ({}): {}*\n\n",
                md_escape(&f.file),
                md_escape(&f.caption)
            ));
        }
        Block::Boxed(title, inner) => {
            s.push_str(&format!("## {}\n\n", md_escape(title)));
            for b in inner {
                block_md(b, s);
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn html_escapes_every_special_character() {
        // The five characters HTML reserves in content and attributes
        // (WHATWG HTML, "escaping a string"; common practice).
        assert_eq!(
            html_escape(r#"<a href="x">'&'</a>"#),
            "&lt;a href=&quot;x&quot;&gt;&#39;&amp;&#39;&lt;/a&gt;"
        );
        let blocks = vec![Block::Para(vec![t("1 < 2"), b("<b>"), c("a&b")])];
        let h = to_html(&blocks);
        assert_eq!(
            h,
            "<p>1 &lt; 2<strong>&lt;b&gt;</strong><code>a&amp;b</code></p>\n"
        );
    }

    #[test]
    fn markdown_escapes_but_keeps_inner_underscores() {
        assert_eq!(md_escape("door_drive"), "door_drive");
        assert_eq!(md_escape("_x_ *y* [z]"), "\\_x\\_ \\*y\\* \\[z\\]");
        assert_eq!(md_code("a`b"), "`` a`b ``");
        let table = Block::Table {
            head: vec!["a|b".into(), "n".into()],
            align: vec![Align::Left, Align::Right],
            rows: vec![vec!["x".into(), "1".into()]],
        };
        assert_eq!(
            to_markdown(&[table]),
            "| a\\|b | n |\n|---|---:|\n| x | 1 |\n"
        );
    }

    #[test]
    fn inline_svg_drops_namespace_and_size() {
        let svg = "<svg width=\"900\" height=\"500\" viewBox=\"0 0 900 500\" xmlns=\"http://www.w3.org/2000/svg\">\n<rect/></svg>";
        let s = inline_svg(svg, "a \"chart\"");
        assert!(!s.contains("http"), "{s}");
        assert!(!s.contains("width=\"900\""), "{s}");
        assert!(
            s.starts_with(
                "<svg viewBox=\"0 0 900 500\" role=\"img\" aria-label=\"a &quot;chart&quot;\""
            ),
            "{s}"
        );
        assert!(s.ends_with("<rect/></svg>"));
    }
}
