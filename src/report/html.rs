//! `index.html`: the sections with their small tables and figures. One self-contained page:
//! its own style sheet inline, no scripts, no external resources, so it works offline and
//! from a copied directory.

use super::figure::xml_escape as esc;
use super::section::{Section, Table};

const STYLE: &str = r#"
:root { --ink: #222; --muted: #6b6b6b; --rule: #e3e3e3; --accent: #2b6c9e; --paper: #fff; --tint: #f6f7f8; }
* { box-sizing: border-box; }
body { margin: 0; background: var(--paper); color: var(--ink);
  font: 16px/1.5 system-ui, -apple-system, "Segoe UI", Roboto, "Helvetica Neue", Arial, sans-serif; }
header, main, footer { max-width: 1240px; margin: 0 auto; padding: 0 24px; }
header { padding-top: 28px; padding-bottom: 8px; border-bottom: 2px solid var(--accent); }
h1 { font-size: 1.7rem; margin: 0 0 4px; font-weight: 650; }
h2 { font-size: 1.3rem; margin: 36px 0 6px; font-weight: 650; border-bottom: 1px solid var(--rule); padding-bottom: 4px; }
p.lede { margin: 0 0 8px; color: var(--muted); max-width: 60rem; }
nav { margin: 8px 0 0; font-size: 0.95rem; }
nav a { color: var(--accent); margin-right: 16px; text-decoration: none; }
nav a:hover { text-decoration: underline; }
.figures { display: grid; grid-template-columns: repeat(auto-fill, minmax(min(540px, 100%), 1fr)); gap: 20px 28px; margin-top: 16px; }
figure { margin: 0; }
figure img { width: 100%; height: auto; border: 1px solid var(--rule); background: #fff; }
figcaption { font-size: 0.9rem; color: var(--ink); margin-top: 6px; }
figcaption b { font-weight: 650; }
table { border-collapse: collapse; margin: 14px 0 4px; font-size: 0.92rem; }
caption { caption-side: top; text-align: left; color: var(--muted); padding-bottom: 4px; font-size: 0.9rem; }
th, td { padding: 4px 12px; border-bottom: 1px solid var(--rule); text-align: left; }
th { background: var(--tint); font-weight: 600; }
td.num { text-align: right; font-variant-numeric: tabular-nums; }
.table-wrap { max-width: 100%; overflow-x: auto; }
p.note { background: #fff6e0; border-left: 4px solid #d0642a; padding: 6px 12px; margin: 10px 0; font-size: 0.92rem; overflow-wrap: anywhere; }
p.more { margin: 2px 0 10px; font-size: 0.9rem; }
p.more a { color: var(--accent); }
footer { color: var(--muted); font-size: 0.85rem; margin-top: 40px; padding-bottom: 28px; border-top: 1px solid var(--rule); padding-top: 8px; }
"#;

/// A cell reads as a number when it starts like one; numbers are right-aligned.
fn is_num(s: &str) -> bool {
    s.trim_start_matches(['+', '−', '-'])
        .chars()
        .next()
        .is_some_and(|c| c.is_ascii_digit())
}

fn table(t: &Table) -> String {
    let head: String = t.header.iter().map(|h| format!("<th>{}</th>", esc(h))).collect();
    let body: String = t
        .rows
        .iter()
        .map(|r| {
            let cells: String = r
                .iter()
                .map(|c| {
                    if is_num(c) {
                        format!("<td class=\"num\">{}</td>", esc(c))
                    } else {
                        format!("<td>{}</td>", esc(c))
                    }
                })
                .collect();
            format!("<tr>{cells}</tr>\n")
        })
        .collect();
    let more = t.link.as_ref().map_or(String::new(), |(text, href)| {
        format!("<p class=\"more\"><a href=\"{}\">{}</a></p>\n", esc(href), esc(text))
    });
    format!(
        "<div class=\"table-wrap\"><table>\n<caption>{}</caption>\n<thead><tr>{head}</tr></thead>\n<tbody>\n{body}</tbody>\n</table></div>\n{more}",
        esc(&t.caption)
    )
}

fn anchor(k: usize) -> String {
    format!("s{}", k + 1)
}

/// The page, with figures numbered in reading order and referenced as `figures/STEM.svg`.
pub fn page(title: &str, lede: &str, sections: &[Section], footer: &str) -> String {
    let nav: String = sections
        .iter()
        .enumerate()
        .map(|(k, s)| format!("<a href=\"#{}\">{}</a>", anchor(k), esc(&s.title)))
        .collect();
    let mut n = 0;
    let mut body = String::new();
    for (k, s) in sections.iter().enumerate() {
        body += &format!(
            "<section id=\"{}\">\n<h2>{}</h2>\n<p class=\"lede\">{}</p>\n",
            anchor(k),
            esc(&s.title),
            esc(&s.intro)
        );
        for n in &s.notes {
            body += &format!("<p class=\"note\">{}</p>\n", esc(n));
        }
        for t in &s.tables {
            body += &table(t);
        }
        if !s.figures.is_empty() {
            body += "<div class=\"figures\">\n";
            for f in &s.figures {
                n += 1;
                body += &format!(
                    "<figure id=\"{stem}\"><img src=\"figures/{file}\" alt=\"{alt}\" loading=\"lazy\">\n<figcaption><b>Figure {n}. {alt}.</b> {cap}</figcaption></figure>\n",
                    stem = esc(&f.stem),
                    file = esc(&f.file_name()),
                    alt = esc(&f.title),
                    cap = esc(&f.caption)
                );
            }
            body += "</div>\n";
        }
        body += "</section>\n";
    }
    format!(
        "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n<title>{t}</title>\n<style>{STYLE}</style>\n</head>\n<body>\n<header><h1>{t}</h1>\n<p class=\"lede\">{l}</p>\n<nav>{nav}</nav></header>\n<main>\n{body}</main>\n<footer>{f}</footer>\n</body>\n</html>\n",
        t = esc(title),
        l = esc(lede),
        f = esc(footer)
    )
}
