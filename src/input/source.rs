//! Line numbers for key paths in a TOML source, so that validation errors (which
//! happen after parsing, on plain values) can still name the line.
//!
//! The locator scans the text once, tracking table headers (`[a.b]`, `[[a]]` with
//! a running index per array of tables) and key lines (`key = …`, dotted and
//! quoted keys); continuation lines of multi-line arrays and inline tables are
//! skipped by bracket depth. A path resolves to the line of its longest defined
//! prefix.

#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Seg {
    Key(String),
    /// 0-based index into an array of tables or an inline array.
    Index(usize),
}

pub fn key(s: &str) -> Seg {
    Seg::Key(s.to_string())
}

/// Render a path for messages: `belief[2].quantiles."0.5"` (array positions from 1).
pub fn render(path: &[Seg]) -> String {
    let mut s = String::new();
    for seg in path {
        match seg {
            Seg::Key(k) => {
                if !s.is_empty() {
                    s.push('.');
                }
                if k.chars()
                    .all(|c| c.is_ascii_alphanumeric() || c == '_' || c == '-')
                {
                    s.push_str(k);
                } else {
                    s.push_str(&format!("\"{k}\""));
                }
            }
            Seg::Index(i) => s.push_str(&format!("[{}]", i + 1)),
        }
    }
    s
}

#[derive(Debug, Clone, Default)]
pub struct SourceMap {
    entries: Vec<(Vec<Seg>, usize)>,
}

fn split_key(s: &str) -> Vec<String> {
    let mut out = Vec::new();
    let mut cur = String::new();
    let mut quote: Option<char> = None;
    for c in s.chars() {
        match quote {
            Some(q) if c == q => quote = None,
            Some(_) => cur.push(c),
            None if c == '"' || c == '\'' => quote = Some(c),
            None if c == '.' => {
                out.push(cur.trim().to_string());
                cur.clear();
            }
            None => cur.push(c),
        }
    }
    out.push(cur.trim().to_string());
    out
}

/// Net bracket depth of a line, ignoring strings and comments.
fn depth(line: &str) -> i32 {
    let mut d = 0;
    let mut quote: Option<char> = None;
    for c in line.chars() {
        match quote {
            Some(q) if c == q => quote = None,
            Some(_) => {}
            None => match c {
                '"' | '\'' => quote = Some(c),
                '#' => break,
                '[' | '{' => d += 1,
                ']' | '}' => d -= 1,
                _ => {}
            },
        }
    }
    d
}

/// Position of the first `=` outside quotes.
fn eq_pos(line: &str) -> Option<usize> {
    let mut quote: Option<char> = None;
    for (i, c) in line.char_indices() {
        match quote {
            Some(q) if c == q => quote = None,
            Some(_) => {}
            None => match c {
                '"' | '\'' => quote = Some(c),
                '=' => return Some(i),
                '#' => return None,
                _ => {}
            },
        }
    }
    None
}

impl SourceMap {
    pub fn new(text: &str) -> Self {
        let mut entries = Vec::new();
        let mut header: Vec<Seg> = Vec::new();
        let mut counts: std::collections::HashMap<String, usize> = Default::default();
        let mut cont = 0i32;
        for (ln, raw) in text.lines().enumerate() {
            let line = raw.trim();
            let lineno = ln + 1;
            if cont > 0 {
                cont += depth(line);
                continue;
            }
            if line.is_empty() || line.starts_with('#') {
                continue;
            }
            if let Some(rest) = line.strip_prefix("[[") {
                let name = rest.split("]]").next().unwrap_or("");
                let parts = split_key(name);
                let full = parts.join(".");
                let idx = counts.entry(full).or_insert(0);
                header = parts.into_iter().map(Seg::Key).collect();
                header.push(Seg::Index(*idx));
                *idx += 1;
                entries.push((header.clone(), lineno));
                continue;
            }
            if let Some(rest) = line.strip_prefix('[') {
                let name = rest.split(']').next().unwrap_or("");
                header = split_key(name).into_iter().map(Seg::Key).collect();
                entries.push((header.clone(), lineno));
                continue;
            }
            if let Some(eq) = eq_pos(line) {
                let mut path = header.clone();
                path.extend(split_key(&line[..eq]).into_iter().map(Seg::Key));
                entries.push((path, lineno));
                cont = depth(&line[eq + 1..]).max(0);
            }
        }
        Self { entries }
    }

    /// The line of the longest defined prefix of `path`.
    pub fn line_of(&self, path: &[Seg]) -> Option<usize> {
        let mut best: Option<(usize, usize)> = None;
        for (p, line) in &self.entries {
            if p.len() <= path.len()
                && path[..p.len()] == p[..]
                && best.is_none_or(|(len, _)| p.len() > len)
            {
                best = Some((p.len(), *line));
            }
        }
        best.map(|b| b.1)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn finds_lines() {
        let text = "title = \"x\"\n[model]\ntemplate = \"mixture-cure\"\n\n[prior.cure_logit]\nmean = { fit = [-4.0, 4.0] }\n\n[[belief]]\nquantity = \"a\"\n[[belief]]\nquantity = \"b\"\nquantiles = { \"0.1\" = 0.15,\n  \"0.5\" = 0.25 }\nweight = 2\n";
        let m = SourceMap::new(text);
        assert_eq!(m.line_of(&[key("model"), key("template")]), Some(3));
        assert_eq!(
            m.line_of(&[key("prior"), key("cure_logit"), key("mean"), key("fit")]),
            Some(6)
        );
        assert_eq!(
            m.line_of(&[key("belief"), Seg::Index(1), key("quantity")]),
            Some(11)
        );
        assert_eq!(
            m.line_of(&[key("belief"), Seg::Index(1), key("quantiles"), key("0.5")]),
            Some(12)
        );
        assert_eq!(
            m.line_of(&[key("belief"), Seg::Index(1), key("weight")]),
            Some(14)
        );
        assert_eq!(m.line_of(&[key("belief"), Seg::Index(0)]), Some(8));
        assert_eq!(
            render(&[key("belief"), Seg::Index(1), key("quantiles"), key("0.5")]),
            "belief[2].quantiles.\"0.5\""
        );
    }
}
