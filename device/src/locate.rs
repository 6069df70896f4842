//! Locating keys in TOML text: key paths (`friction.mu.values[2][1]`), their byte spans and
//! 1-based line and column, so every message can point at the value it is about.

use std::fmt;

/// One segment of a key path.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Seg {
    /// A table key.
    Key(String),
    /// An array index.
    Index(usize),
}

/// A key path such as `friction.mu.values[2][1]`.
#[derive(Debug, Clone, PartialEq, Eq, Default)]
pub struct KeyPath(pub Vec<Seg>);

impl KeyPath {
    /// Parse `a.b[2].c` into segments.
    pub fn parse(s: &str) -> Self {
        let mut segs = Vec::new();
        for part in s.split('.') {
            let mut rest = part;
            if let Some(i) = rest.find('[') {
                if i > 0 {
                    segs.push(Seg::Key(rest[..i].to_string()));
                }
                rest = &rest[i..];
                while let Some(stripped) = rest.strip_prefix('[') {
                    let end = stripped.find(']').unwrap_or(stripped.len());
                    if let Ok(n) = stripped[..end].parse() {
                        segs.push(Seg::Index(n));
                    }
                    rest = stripped.get(end + 1..).unwrap_or("");
                }
            } else if !rest.is_empty() {
                segs.push(Seg::Key(rest.to_string()));
            }
        }
        Self(segs)
    }
}

impl fmt::Display for KeyPath {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let mut first = true;
        for s in &self.0 {
            match s {
                Seg::Key(k) => {
                    if !first {
                        write!(f, ".")?;
                    }
                    write!(f, "{k}")?;
                }
                Seg::Index(i) => write!(f, "[{i}]")?,
            }
            first = false;
        }
        Ok(())
    }
}

/// 1-based (line, column) of a byte offset; the column counts characters.
pub fn line_col(src: &str, offset: usize) -> (usize, usize) {
    let offset = offset.min(src.len());
    let before = src.get(..offset).unwrap_or(src);
    let line = before.matches('\n').count() + 1;
    let col = before.rsplit('\n').next().map_or(0, |s| s.chars().count()) + 1;
    (line, col)
}

/// Byte span of a key path's value in the TOML text (the key itself for a missing value's
/// parent), or `None` when the text does not contain it.
pub fn span_of(src: &str, path: &KeyPath) -> Option<std::ops::Range<usize>> {
    use toml::de::{DeTable, DeValue};
    let root = DeTable::parse(src).ok()?;
    let mut table: &DeTable<'_> = root.get_ref();
    let mut value: Option<&toml::Spanned<DeValue<'_>>> = None;
    let mut last_span = None;
    for seg in &path.0 {
        match seg {
            Seg::Key(k) => {
                let t = match value {
                    None => table,
                    Some(v) => match v.get_ref() {
                        DeValue::Table(t) => t,
                        _ => return last_span,
                    },
                };
                match t
                    .iter()
                    .find(|(key, _)| key.get_ref().as_ref() == k.as_str())
                {
                    Some((key, v)) => {
                        last_span = Some(key.span());
                        value = Some(v);
                        table = t;
                    }
                    None => return last_span,
                }
            }
            Seg::Index(i) => {
                let v = value?;
                match v.get_ref() {
                    DeValue::Array(a) => match a.get(*i) {
                        Some(item) => {
                            last_span = Some(item.span());
                            value = Some(item);
                        }
                        None => return Some(v.span()),
                    },
                    _ => return Some(v.span()),
                }
            }
        }
    }
    match (path.0.last(), value) {
        // A key's own position reads best for a whole-table or scalar issue.
        (Some(Seg::Key(_)), Some(v)) if !matches!(v.get_ref(), DeValue::Table(_)) => last_span,
        (_, Some(v)) if !matches!(v.get_ref(), DeValue::Table(_)) => Some(v.span()),
        _ => last_span,
    }
}

/// Byte span of the *value* at a key path (e.g. the whole array of `friction.mu.values`).
pub fn value_span(src: &str, path: &KeyPath) -> Option<std::ops::Range<usize>> {
    use toml::de::{DeTable, DeValue};
    let root = DeTable::parse(src).ok()?;
    let mut cur: Option<&toml::Spanned<DeValue<'_>>> = None;
    for seg in &path.0 {
        match seg {
            Seg::Key(k) => {
                let t = match cur.map(toml::Spanned::get_ref) {
                    None => root.get_ref(),
                    Some(DeValue::Table(t)) => t,
                    Some(_) => return None,
                };
                cur = Some(
                    t.iter()
                        .find(|(key, _)| key.get_ref().as_ref() == k.as_str())?
                        .1,
                );
            }
            Seg::Index(i) => match cur.map(toml::Spanned::get_ref) {
                Some(DeValue::Array(a)) => cur = Some(a.get(*i)?),
                _ => return None,
            },
        }
    }
    cur.map(toml::Spanned::span)
}

/// (line, column) of a key path in the TOML text.
pub fn locate(src: &str, path: &KeyPath) -> Option<(usize, usize)> {
    span_of(src, path).map(|s| line_col(src, s.start))
}

/// The dotted path of the innermost key whose key or value span contains `offset`.
pub fn key_at(src: &str, offset: usize) -> Option<String> {
    use toml::de::{DeTable, DeValue};
    fn walk(t: &DeTable<'_>, offset: usize, prefix: &str) -> Option<String> {
        for (k, v) in t.iter() {
            let name = if prefix.is_empty() {
                k.get_ref().to_string()
            } else {
                format!("{prefix}.{}", k.get_ref())
            };
            if k.span().contains(&offset) {
                return Some(name);
            }
            match v.get_ref() {
                DeValue::Table(inner) => {
                    if let Some(found) = walk(inner, offset, &name) {
                        return Some(found);
                    }
                }
                DeValue::Array(items) => {
                    for (i, item) in items.iter().enumerate() {
                        if let DeValue::Table(inner) = item.get_ref()
                            && let Some(found) = walk(inner, offset, &format!("{name}[{i}]"))
                        {
                            return Some(found);
                        }
                    }
                    if v.span().contains(&offset) {
                        return Some(name);
                    }
                }
                _ => {
                    if v.span().contains(&offset) {
                        return Some(name);
                    }
                }
            }
        }
        None
    }
    // The text may not parse at all (a syntax error): then there is no key to name.
    let root = DeTable::parse(src).ok()?;
    walk(root.get_ref(), offset, "")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn key_paths_round_trip() {
        let p = KeyPath::parse("friction.mu.values[2][1]");
        assert_eq!(p.to_string(), "friction.mu.values[2][1]");
        assert_eq!(p.0.len(), 5);
        assert_eq!(line_col("ab\ncd", 4), (2, 2));
    }
}
