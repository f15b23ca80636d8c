//! Reading rows of stores written before the current version of the store format.
//!
//! Rows before version 4 were all sampling rows and carry no `method`; they gain
//! `"method": "sampling"`. Version 1 rows carry no `version` key and name the failure count `errors`; a version 1 spec
//! could also leave its `max_errors` stop in a hand-edited row. Such a row is upgraded in place
//! before it is read as a [`crate::study::sweep::ChunkRow`], so `merge` and `plot` read old and
//! new stores alike (and `merge` writes them back in the current format). This file and its test
//! are the only places the old key names may appear (`scripts/forbid.sh` checks).

use serde_json::{Map, Value};

/// Upgrades one parsed row to the current format: a row without `version` (or with version 1)
/// has `errors` renamed to `failures` and any `max_errors` dropped; a version 2 row is a version
/// 3 row without `vary`; rows before version 4 gain `method` = `sampling`. All get the current
/// `version`.
pub(super) fn upgrade(row: &mut Value, current: u32) {
    let Value::Object(map) = row else {
        return;
    };
    let version = map.get("version").and_then(Value::as_u64);
    if version.is_none_or(|v| v < 2) {
        rename(map, "errors", "failures");
        map.remove("max_errors");
    }
    if version.is_none_or(|v| v < 4) && !map.contains_key("method") {
        map.insert("method".into(), Value::from("sampling"));
    }
    if version.is_none_or(|v| v < u64::from(current)) {
        map.insert("version".into(), Value::from(current));
    }
}

fn rename(map: &mut Map<String, Value>, from: &str, to: &str) {
    if map.contains_key(to) {
        return;
    }
    if let Some(v) = map.remove(from) {
        map.insert(to.into(), v);
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn version_one_rows_gain_their_new_names() {
        let mut row: Value =
            serde_json::from_str(r#"{"task":"t","shots":10,"errors":3,"max_errors":5}"#).unwrap();
        upgrade(&mut row, 4);
        assert_eq!(
            row,
            serde_json::json!({"task":"t","shots":10,"failures":3,"version":4,"method":"sampling"})
        );
        // Version 2 and 3 rows gain the current version and the method.
        for v in [2, 3] {
            let mut row: Value = serde_json::json!({"version":v,"failures":1});
            upgrade(&mut row, 4);
            assert_eq!(
                row,
                serde_json::json!({"version":4,"failures":1,"method":"sampling"})
            );
        }
        // A current row is left alone, even one whose label happens to be `errors`.
        let mut row: Value = serde_json::from_str(
            r#"{"version":4,"failures":1,"label":"errors","method":"splitting"}"#,
        )
        .unwrap();
        let before = row.clone();
        upgrade(&mut row, 4);
        assert_eq!(row, before);
    }
}
