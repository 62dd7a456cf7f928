//! JSON plumbing: reading stdin, parsing with readable errors, finite-or-null numbers,
//! ordered duplicate-free objects, and the error document.

use std::fmt;
use std::io::Read;

use serde::de::{self, DeserializeOwned, Deserializer, MapAccess, Visitor};
use serde::{Deserialize, Serialize, Serializer};

use super::CliError;

/// Largest JSON document read from stdin, bytes.
pub const MAX_INPUT_BYTES: u64 = 1 << 20;

/// A number in the output: written as a JSON number when finite, as `null` otherwise (so
/// the output is always valid JSON).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Num(pub f64);

impl Serialize for Num {
    fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        // A negative zero (a rounding residue) is written as 0: never "-0.0".
        if self.0 == 0.0 {
            s.serialize_f64(0.0)
        } else if self.0.is_finite() {
            s.serialize_f64(self.0)
        } else {
            s.serialize_none()
        }
    }
}

/// An optional number: `null` when absent or not finite.
pub fn opt(v: Option<f64>) -> Option<Num> {
    v.map(Num)
}

/// Reads the whole of stdin (at most [`MAX_INPUT_BYTES`]) as UTF-8.
pub fn read_input(stdin: &mut dyn Read) -> Result<String, CliError> {
    let mut bytes = Vec::new();
    stdin
        .take(MAX_INPUT_BYTES + 1)
        .read_to_end(&mut bytes)
        .map_err(|e| CliError::new(format!("cannot read stdin: {e}")))?;
    if u64::try_from(bytes.len()).unwrap_or(u64::MAX) > MAX_INPUT_BYTES {
        return Err(CliError::new(format!("input on stdin is larger than {MAX_INPUT_BYTES} bytes")));
    }
    String::from_utf8(bytes).map_err(|_| CliError::new("input on stdin is not valid UTF-8"))
}

/// Request keys renamed so that every key carries its unit and means one thing (README,
/// "Vocabulary"): old key → new key and what changed.
pub const RENAMED_KEYS: &[(&str, &str, &str)] = &[
    ("volume_l", "volume_ml", "lab volumes are in mL"),
    ("sample_volume_l", "sample_volume_ml", "lab volumes are in mL"),
    ("max_titrant_l", "max_titrant_ml", "lab volumes are in mL"),
    ("points", "point_count", "`points` is always a list of points"),
];

/// The hint for a serde "unknown field `KEY`" message whose key was renamed.
fn renamed_hint(message: &str) -> Option<String> {
    let key = message.split("unknown field `").nth(1)?.split('`').next()?;
    RENAMED_KEYS
        .iter()
        .find(|(old, _, _)| *old == key)
        .map(|(old, new, why)| format!(" (\"{old}\" is now \"{new}\": {why}; see README, Vocabulary)"))
}

/// Parses a JSON request; `example` shows the expected shape in the error for empty input.
/// A key that was renamed is answered with its new name.
pub fn parse<T: DeserializeOwned>(text: &str, example: &str) -> Result<T, CliError> {
    if text.trim().is_empty() {
        return Err(CliError::new(format!("no JSON on stdin; expected an object like {example}")));
    }
    serde_json::from_str(text).map_err(|e| {
        let message = e.to_string();
        let hint = renamed_hint(&message).unwrap_or_default();
        CliError::new(format!("invalid JSON input: {message}{hint}"))
    })
}

/// Serializes an output document, pretty-printed, with a final newline.
pub fn render<T: Serialize>(value: &T) -> Result<String, CliError> {
    serde_json::to_string_pretty(value)
        .map(|mut s| {
            s.push('\n');
            s
        })
        .map_err(|e| CliError::new(format!("cannot write JSON output: {e}")))
}

/// `{"error": message}` with a final newline.
pub fn error_document(message: &str) -> String {
    let mut s = serde_json::json!({ "error": message }).to_string();
    s.push('\n');
    s
}

/// A JSON object of name → number read in document order; a repeated name is an error
/// (plain maps would silently keep the last value).
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Entries(pub Vec<(String, f64)>);

impl<'de> Deserialize<'de> for Entries {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        struct EntriesVisitor;
        impl<'de> Visitor<'de> for EntriesVisitor {
            type Value = Entries;
            fn expecting(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
                f.write_str("an object of substance → mol/L, e.g. {\"NaHCO3\": 0.002}")
            }
            fn visit_map<A: MapAccess<'de>>(self, mut map: A) -> Result<Entries, A::Error> {
                let mut out: Vec<(String, f64)> = Vec::new();
                while let Some((key, value)) = map.next_entry::<String, f64>()? {
                    if out.iter().any(|(k, _)| *k == key) {
                        return Err(de::Error::custom(format!("duplicate key \"{key}\"")));
                    }
                    out.push((key, value));
                }
                Ok(Entries(out))
            }
        }
        d.deserialize_map(EntriesVisitor)
    }
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;

    #[test]
    fn non_finite_numbers_become_null() {
        let v = vec![Num(1.5), Num(f64::NAN), Num(f64::INFINITY)];
        assert_eq!(serde_json::to_string(&v).unwrap(), "[1.5,null,null]");
    }

    #[test]
    fn entries_keep_order_and_refuse_duplicates() {
        let e: Entries = serde_json::from_str(r#"{"b": 2, "a": 1e-3}"#).unwrap();
        assert_eq!(e.0, vec![("b".to_owned(), 2.0), ("a".to_owned(), 1e-3)]);
        let dup = serde_json::from_str::<Entries>(r#"{"a": 1, "a": 2}"#).unwrap_err();
        assert!(dup.to_string().contains("duplicate key"));
    }

    #[test]
    fn error_document_escapes_the_message() {
        let doc: serde_json::Value = serde_json::from_str(&error_document("bad \"quote\"\n")).unwrap();
        assert_eq!(doc.get("error").and_then(|v| v.as_str()), Some("bad \"quote\"\n"));
    }

    #[test]
    fn oversized_input_is_refused() {
        let big = vec![b' '; usize::try_from(MAX_INPUT_BYTES).unwrap() + 1];
        assert!(read_input(&mut big.as_slice()).is_err());
    }
}
