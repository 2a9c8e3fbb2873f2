//! The HTML page: one self-contained file (styles inline, figures inline
//! as SVG, its one script inline, no fonts or anything else fetched),
//! readable on a screen, with scripts on or off, and printable on A4 or
//! Letter.
//!
//! Owns: the page template and its style sheet (`report.css`).
//! May use: `super::doc`.

use super::doc::{Block, html_escape, to_html};

/// The style sheet, inlined into every page.
const CSS: &str = include_str!("report.css");

/// The table of contents: the level-2 headings.
fn contents(blocks: &[Block]) -> String {
    let mut items = String::new();
    for block in blocks {
        if let Block::Heading(2, text, id) = block {
            items.push_str(&format!(
                "<li><a href=\"#{}\">{}</a></li>",
                html_escape(id),
                html_escape(text)
            ));
        }
    }
    if items.is_empty() {
        String::new()
    } else {
        format!("<nav class=\"contents\" aria-label=\"Contents\"><ul>{items}</ul></nav>\n")
    }
}

/// The whole page. The first block should be the level-1 heading.
/// `live` (the target panel and its script, or nothing) goes after the
/// header.
pub fn page(title: &str, blocks: &[Block], generator: &str, live: &str) -> String {
    let (head, rest) = match blocks.split_first() {
        Some((h @ Block::Heading(1, ..), rest)) => (to_html(std::slice::from_ref(h)), rest),
        _ => (String::new(), blocks),
    };
    let (intro, body) = match rest.split_first() {
        Some((p @ Block::Para(_), body)) => (to_html(std::slice::from_ref(p)), body),
        _ => (String::new(), rest),
    };
    format!(
        "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n\
<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n\
<meta name=\"generator\" content=\"{}\">\n<title>{}</title>\n<style>\n{CSS}</style>\n</head>\n<body>\n<main>\n\
<header>\n{head}<div class=\"intro\">{intro}</div>\n</header>\n{live}{}{}</main>\n</body>\n</html>\n",
        html_escape(generator),
        html_escape(title),
        contents(body),
        to_html(body)
    )
}
