//! Problems with a case: the typed error, one problem tied to its key, and the `Checker`
//! that collects every problem of a pass.

use crate::text::num;

/// What is wrong, as data: the values and limits involved. [`ProblemKind::render`] is the one
/// place these become prose.
#[derive(Debug, Clone, PartialEq)]
pub enum ProblemKind {
    /// A required key is absent; `give` says what to give.
    Missing {
        /// What to give, e.g. "m" or "the `[geometry]` table".
        give: String,
    },
    /// A key the table does not take.
    UnknownKey {
        /// The closest valid key, if any is close.
        suggestion: Option<String>,
        /// Where: "at the top level", or "in `[geometry]` for a kind".
        place: String,
        /// The keys that are valid there.
        valid: Vec<String>,
    },
    /// A value of the wrong type.
    WrongType {
        /// What was expected, e.g. "a number (m)".
        expected: String,
        /// What was found, e.g. "the text \"0.025\"".
        found: String,
    },
    /// A word outside its choices.
    InvalidWord {
        /// The word given (quoted and escaped).
        given: String,
        /// What the word chooses, e.g. "film".
        what: String,
        /// The closest valid word, if any is close.
        suggestion: Option<String>,
        /// The valid words.
        valid: Vec<String>,
    },
    /// A number that must be finite and above zero is not.
    NotPositive {
        /// The value given.
        value: f64,
        /// Its unit.
        unit: String,
    },
    /// A number above anything an exchanger has (units wrong?).
    Implausible {
        /// The value given.
        value: f64,
        /// Its unit.
        unit: String,
    },
    /// Any other problem, already a sentence naming the values and what would be valid.
    Other(String),
}

impl ProblemKind {
    /// The problem as a sentence (after the key).
    pub fn render(&self) -> String {
        let quoted = |words: &[String]| words.iter().map(|w| format!("\"{w}\"")).collect::<Vec<_>>().join(", ");
        match self {
            ProblemKind::Missing { give } => format!("is missing: {give}"),
            ProblemKind::UnknownKey { suggestion, place, valid } => {
                let hint = suggestion.as_ref().map(|c| format!("did you mean {c}? ")).unwrap_or_default();
                format!("unknown key; {hint}valid keys {place}: {}", valid.join(", "))
            }
            ProblemKind::WrongType { expected, found } => format!("expected {expected}, found {found}"),
            ProblemKind::InvalidWord { given, what, suggestion, valid } => {
                let hint = suggestion.as_ref().map(|c| format!(" Did you mean \"{c}\"?")).unwrap_or_default();
                format!("{given} is not valid for the {what}.{hint} Valid: {}", quoted(valid))
            }
            ProblemKind::NotPositive { value, unit } => format!("{} {unit} is not valid: it must be a finite number above zero", num(*value)),
            ProblemKind::Implausible { value, unit } => {
                format!("{} {unit} is implausibly large for any exchanger: check the units in the key name", num(*value))
            }
            ProblemKind::Other(text) => text.clone(),
        }
    }
}

/// One thing wrong with a case, tied to its key.
#[derive(Debug, Clone, PartialEq)]
pub struct Problem {
    /// Key path, e.g. `hot.mass_flow_kg_s`.
    pub key: String,
    /// Line in the case file, where known.
    pub line: Option<usize>,
    /// What is wrong, as data.
    pub kind: ProblemKind,
    /// The same as a sentence ([`ProblemKind::render`]).
    pub message: String,
}

impl Problem {
    /// A problem of `kind` at `key`.
    pub fn new(key: impl Into<String>, line: Option<usize>, kind: ProblemKind) -> Self {
        let message = kind.render();
        Self { key: key.into(), line, kind, message }
    }
}

impl std::fmt::Display for Problem {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self.line {
            Some(l) => write!(f, "line {l}: {}: {}", self.key, self.message),
            None => write!(f, "{}: {}", self.key, self.message),
        }
    }
}

/// Why a case could not be read.
#[derive(Debug, thiserror::Error)]
pub enum CaseError {
    /// The file could not be read (missing, not a regular file, too large, not text).
    #[error("case file {path} {problem}")]
    Unreadable {
        /// Path given.
        path: String,
        /// What is wrong with it.
        problem: String,
    },
    /// TOML syntax, a missing key, an unknown key or a wrong type.
    #[error("{origin}: {message}")]
    Syntax {
        /// File name.
        origin: String,
        /// Parser message with line and column.
        message: String,
    },
    /// Values that parse but are not valid.
    #[error("{origin}: {} problem(s):\n{}", problems.len(), problems.iter().map(|p| format!("  - {p}")).collect::<Vec<_>>().join("\n"))]
    Invalid {
        /// File name.
        origin: String,
        /// Every problem found.
        problems: Vec<Problem>,
    },
}

pub(super) struct Checker {
    pub(super) problems: Vec<Problem>,
    pub(super) warnings: Vec<String>,
}

impl Checker {
    pub(super) fn fail(&mut self, key: &str, message: String) {
        let kind = match message.strip_prefix("is missing: ") {
            Some(give) => ProblemKind::Missing { give: give.to_string() },
            None => ProblemKind::Other(message),
        };
        self.problems.push(Problem::new(key, None, kind));
    }
    /// A legal but suspicious input (printed and written to summary.json).
    pub(super) fn warn(&mut self, message: String) {
        self.warnings.push(message);
    }
    /// A finite value strictly above zero.
    pub(super) fn positive(&mut self, key: &str, v: f64, unit: &str) -> f64 {
        if !(v.is_finite() && v > 0.0) {
            self.problems.push(Problem::new(key, None, ProblemKind::NotPositive { value: v, unit: unit.into() }));
        } else if v > 1e9 {
            self.problems.push(Problem::new(key, None, ProblemKind::Implausible { value: v, unit: unit.into() }));
        }
        v
    }
    pub(super) fn required(&mut self, key: &str, v: Option<f64>, unit: &str, why: &str) -> f64 {
        match v {
            Some(v) => self.positive(key, v, unit),
            None => {
                self.problems.push(Problem::new(key, None, ProblemKind::Missing { give: format!("give a value in {unit} ({why})") }));
                f64::NAN
            }
        }
    }
    pub(super) fn looks_like_mm(&mut self, key: &str, v: f64) {
        if v.is_finite() && v > 2.0 {
            self.warnings.push(format!("{key} = {v} m is very large: was it entered in millimetres? (keys ending _m are metres)", v = num(v)));
        }
    }
}

/// At most ten items of a list, then a count of the rest.
pub(super) fn list(items: &[String]) -> String {
    let shown = items.iter().take(10).cloned().collect::<Vec<_>>().join(", ");
    if items.len() > 10 {
        format!("{shown} and {} more", items.len() - 10)
    } else {
        shown
    }
}

/// Closest name by edit distance, for "did you mean".
pub fn closest<'a>(word: &str, options: &'a [String]) -> Option<&'a str> {
    pub(super) fn distance(a: &str, b: &str) -> usize {
        let (a, b): (Vec<char>, Vec<char>) = (a.chars().collect(), b.chars().collect());
        let mut prev: Vec<usize> = (0..=b.len()).collect();
        for i in 1..=a.len() {
            let mut cur = vec![i; b.len() + 1];
            for j in 1..=b.len() {
                let sub = prev[j - 1] + usize::from(a[i - 1] != b[j - 1]);
                cur[j] = sub.min(prev[j] + 1).min(cur[j - 1] + 1);
            }
            prev = cur;
        }
        prev[b.len()]
    }
    let w = word.to_lowercase();
    if w.len() >= 3 {
        if let Some(o) = options.iter().find(|o| o.to_lowercase().starts_with(&w)) {
            return Some(o.as_str());
        }
    }
    options.iter().map(|o| (distance(&w, &o.to_lowercase()), o)).filter(|(d, o)| *d <= 3.max(o.len() / 3)).min_by_key(|(d, _)| *d).map(|(_, o)| o.as_str())
}
