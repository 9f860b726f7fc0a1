//! Numbers and echoed text in messages: engineering format with sensible digits, user text
//! quoted with control characters escaped and long values cut, so that no message is
//! unreadable (300-digit numbers), huge (a 200 kB value echoed) or able to drive the
//! terminal (escape codes from a case file).

/// A number for a message: up to six significant digits without trailing zeros in the
/// ordinary range (1e-3 ≤ |v| < 1e7), else scientific with four. `250.00000000000003` → `250`,
/// `1e300` → `1e300`, `0.02120` → `0.0212`.
pub fn num(v: f64) -> String {
    if v.is_nan() {
        return "not-a-number".into();
    }
    if v.is_infinite() {
        return if v > 0.0 { "infinity".into() } else { "-infinity".into() };
    }
    if v == 0.0 {
        return "0".into();
    }
    let a = v.abs();
    if (1e-3..1e7).contains(&a) {
        let decimals = (5 - a.log10().floor() as i32).max(0) as usize;
        let s = format!("{v:.decimals$}");
        let s = if s.contains('.') { s.trim_end_matches('0').trim_end_matches('.').to_string() } else { s };
        if s == "-0" {
            "0".into()
        } else {
            s
        }
    } else {
        let s = format!("{v:.3e}");
        match s.split_once('e') {
            Some((m, e)) => {
                let m = if m.contains('.') { m.trim_end_matches('0').trim_end_matches('.') } else { m };
                format!("{m}e{e}")
            }
            None => s,
        }
    }
}

/// A number for a table column: fixed with `decimals` decimals in the ordinary range,
/// else [`num`] (a value of 10³⁰⁰ must not print 300 digits).
pub fn fixed(v: f64, decimals: usize) -> String {
    if v.is_finite() && v.abs() < 1e9 {
        format!("{v:.decimals$}")
    } else {
        num(v)
    }
}

/// User text for a message, in double quotes: control characters escaped (`\u{1b}`),
/// quotes and backslashes escaped, cut to `max` characters with an ellipsis.
pub fn quote(s: &str, max: usize) -> String {
    let mut out = String::from("\"");
    for (i, c) in s.chars().enumerate() {
        if i >= max {
            out.push('…');
            break;
        }
        match c {
            '"' => out.push_str("\\\""),
            '\\' => out.push_str("\\\\"),
            c if c.is_control() || c == '\u{feff}' || c == '\u{202e}' => out.extend(c.escape_default()),
            c => out.push(c),
        }
    }
    out.push('"');
    out
}

/// A whole message made safe to print: control characters other than newline and tab
/// escaped, each line cut to `line_max` characters and the message to `lines_max` lines.
pub fn safe_message(s: &str, line_max: usize, lines_max: usize) -> String {
    let mut out = String::new();
    let total = s.lines().count();
    for (n, line) in s.lines().enumerate() {
        if n == lines_max {
            out.push_str(&format!("  … and {} more line(s)\n", total - lines_max));
            break;
        }
        for (i, c) in line.chars().enumerate() {
            if i == line_max {
                out.push('…');
                break;
            }
            if c == '\t' {
                out.push(c);
            } else if c.is_control() || c == '\u{feff}' || c == '\u{202e}' {
                out.extend(c.escape_default());
            } else {
                out.push(c);
            }
        }
        out.push('\n');
    }
    out.pop();
    out
}

/// `v` to `digits` significant digits, without trailing zeros.
pub fn sig(v: f64, digits: i32) -> String {
    if v == 0.0 || !v.is_finite() {
        return num(v);
    }
    let mag = v.abs().log10().floor() as i32;
    if !(-4..7).contains(&mag) {
        return format!("{v:.3e}");
    }
    let decimals = (digits - 1 - mag).max(0) as usize;
    let s = format!("{v:.decimals$}");
    if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        s
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn numbers_read_as_an_engineer_writes_them() {
        assert_eq!(num(250.00000000000003), "250");
        assert_eq!(num(0.0212), "0.0212");
        assert_eq!(num(1e300), "1e300");
        assert_eq!(num(-4.5e-9), "-4.5e-9");
        assert_eq!(num(101_325.0), "101325");
        assert_eq!(num(29_224.04), "29224");
        assert_eq!(num(1.2345678), "1.23457");
        assert_eq!(num(12_345_678.0), "1.235e7");
        assert_eq!(num(f64::NAN), "not-a-number");
        assert!(num(1e300).len() < 12);
    }

    #[test]
    fn echoed_text_is_escaped_and_cut() {
        assert_eq!(quote("a\u{1b}[31mb", 40), "\"a\\u{1b}[31mb\"");
        assert_eq!(quote(&"x".repeat(500), 10), format!("\"{}…\"", "x".repeat(10)));
        let m = safe_message(&format!("one\u{7}\n{}\nthree\nfour", "y".repeat(100)), 20, 3);
        assert_eq!(m, format!("one\\u{{7}}\n{}…\nthree\n  … and 1 more line(s)", "y".repeat(20)));
    }
}
