//! The one way a command prints its `--json` answer: an object carries the `schema` version
//! field (added here, so no command can forget it); a list stays a list, as the schema
//! documents. Compact documents (one change, one line, for scripts that read line by line) and
//! pretty ones share the same rule.

use crate::report::style::JSON_SCHEMA;
use serde::Serialize;
use std::io::Write;

/// `value` as a JSON document: objects gain `"schema": JSON_SCHEMA` (unless they carry one).
pub(crate) fn document<T: Serialize + ?Sized>(value: &T) -> serde_json::Result<serde_json::Value> {
    let mut v = serde_json::to_value(value)?;
    if let serde_json::Value::Object(map) = &mut v {
        map.entry("schema").or_insert(JSON_SCHEMA.into());
    }
    Ok(v)
}

/// Print `value` as one line of JSON.
pub(crate) fn line<T: Serialize + ?Sized>(out: &mut dyn Write, value: &T) -> anyhow::Result<()> {
    let text = serde_json::to_string(&document(value)?)?;
    writeln!(out, "{text}")?;
    Ok(())
}

/// Print `value` as indented JSON.
pub(crate) fn pretty<T: Serialize + ?Sized>(out: &mut dyn Write, value: &T) -> anyhow::Result<()> {
    let text = serde_json::to_string_pretty(&document(value)?)?;
    writeln!(out, "{text}")?;
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn objects_carry_the_schema_and_lists_stay_lists() {
        let obj = document(&serde_json::json!({"a": 1})).expect("an object serialises");
        assert_eq!(obj["schema"], serde_json::json!(JSON_SCHEMA));
        assert_eq!(obj["a"], serde_json::json!(1));
        let list = document(&[1, 2]).expect("a list serialises");
        assert_eq!(list, serde_json::json!([1, 2]));
        let mut out = Vec::new();
        line(&mut out, &serde_json::json!({"schema": 7})).expect("writes to a Vec");
        assert_eq!(String::from_utf8(out).expect("UTF-8"), "{\"schema\":7}\n");
    }
}
