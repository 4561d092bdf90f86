//! Dotted field paths into a scenario's JSON (`tether.cross_link_spacing_km`,
//! `repair.stations[0].climbers`), and setting one field from command-line text while keeping
//! the field's JSON type.
//!
//! Paths are resolved against the *canonical* form of the base scenario (the parsed spec
//! serialised back), which lists every field including those left at their defaults, so a
//! field the file omits can still be varied and every valid path can be suggested.

use serde_json::Value;

/// One step of a path: an object field or an array element.
#[derive(Clone, Debug, PartialEq, Eq)]
enum Step {
    Field(String),
    Index(usize),
}

/// Split `a.b[0].c` into steps; `None` when the text is not a path.
fn parse(path: &str) -> Option<Vec<Step>> {
    let mut steps = Vec::new();
    for part in path.split('.') {
        let (name, mut rest) = match part.find('[') {
            Some(i) => (&part[..i], &part[i..]),
            None => (part, ""),
        };
        if name.is_empty() {
            return None;
        }
        steps.push(Step::Field(name.to_string()));
        while !rest.is_empty() {
            let close = rest.find(']')?;
            let index: usize = rest.get(1..close)?.parse().ok()?;
            steps.push(Step::Index(index));
            rest = &rest[close + 1..];
            if !rest.is_empty() && !rest.starts_with('[') {
                return None;
            }
        }
    }
    Some(steps)
}

/// Every path to a single value (not an object or array) in `v`, in document order.
pub fn leaf_paths(v: &Value) -> Vec<String> {
    fn walk(v: &Value, prefix: &str, out: &mut Vec<String>) {
        match v {
            Value::Object(m) => {
                for (k, x) in m {
                    let p = if prefix.is_empty() {
                        k.clone()
                    } else {
                        format!("{prefix}.{k}")
                    };
                    walk(x, &p, out);
                }
            }
            Value::Array(a) => {
                for (i, x) in a.iter().enumerate() {
                    walk(x, &format!("{prefix}[{i}]"), out);
                }
            }
            _ => out.push(prefix.to_string()),
        }
    }
    let mut out = Vec::new();
    walk(v, "", &mut out);
    out
}

/// The value at `path`, if the path exists.
pub fn get<'a>(v: &'a Value, path: &str) -> Option<&'a Value> {
    let mut cur = v;
    for s in parse(path)? {
        cur = match s {
            Step::Field(k) => cur.as_object()?.get(&k)?,
            Step::Index(i) => cur.as_array()?.get(i)?,
        };
    }
    Some(cur)
}

fn get_mut<'a>(v: &'a mut Value, path: &str) -> Option<&'a mut Value> {
    let mut cur = v;
    for s in parse(path)? {
        cur = match s {
            Step::Field(k) => cur.as_object_mut()?.get_mut(&k)?,
            Step::Index(i) => cur.as_array_mut()?.get_mut(i)?,
        };
    }
    Some(cur)
}

/// Turn command-line text into a JSON value of the same kind as `current` (the field's value in
/// the canonical base scenario). Whole-number fields get integers (`4.0` is accepted as 4),
/// real-number fields get floats, switches `true`/`false`, words stay strings. The error says
/// why the text does not fit.
pub fn convert(current: &Value, text: &str) -> Result<Value, String> {
    let t = text.trim();
    match current {
        Value::Number(n) if n.is_u64() || n.is_i64() => {
            if let Ok(i) = t.parse::<u64>() {
                return Ok(Value::from(i));
            }
            if let Ok(i) = t.parse::<i64>() {
                return Ok(Value::from(i));
            }
            match t.parse::<f64>() {
                Ok(x) if x.is_finite() && x.fract() == 0.0 && x.abs() < 9.0e15 => Ok(if x >= 0.0 {
                    Value::from(x as u64)
                } else {
                    Value::from(x as i64)
                }),
                Ok(_) => Err("this field takes a whole number".into()),
                Err(_) => {
                    Err("this field takes a whole number, and the text is not a number".into())
                }
            }
        }
        Value::Number(_) => match t.parse::<f64>() {
            Ok(x) if x.is_finite() => Ok(Value::from(x)),
            _ => Err("this field takes a finite number".into()),
        },
        Value::Bool(_) => match t {
            "true" => Ok(Value::Bool(true)),
            "false" => Ok(Value::Bool(false)),
            _ => Err("this field is a switch: use true or false".into()),
        },
        Value::String(_) => Ok(Value::String(t.to_string())),
        Value::Null => Err(
            "this section is empty (null) in the base scenario; fill it in the scenario file first"
                .into(),
        ),
        Value::Object(_) | Value::Array(_) => {
            Err("this is a section, not a single value; vary one of its fields".into())
        }
    }
}

/// Set the field at `path` (which must exist) to `value`.
pub fn set(v: &mut Value, path: &str, value: Value) -> bool {
    match get_mut(v, path) {
        Some(slot) => {
            *slot = value;
            true
        }
        None => false,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use serde_json::json;

    #[test]
    fn paths_with_indices() {
        let v = json!({"a": {"b": [ {"c": 1}, {"c": 2.5} ]}, "d": true});
        assert_eq!(leaf_paths(&v), vec!["a.b[0].c", "a.b[1].c", "d"]);
        assert_eq!(get(&v, "a.b[1].c"), Some(&json!(2.5)));
        assert_eq!(get(&v, "a.b[2].c"), None);
        assert_eq!(get(&v, "a..b"), None);
        assert_eq!(get(&v, "a.b[x]"), None);
    }

    #[test]
    fn conversion_keeps_the_json_kind() {
        assert_eq!(convert(&json!(6), "4"), Ok(json!(4)));
        assert_eq!(convert(&json!(6), "4.0"), Ok(json!(4)));
        assert!(convert(&json!(6), "4.5")
            .unwrap_err()
            .contains("whole number"));
        assert_eq!(convert(&json!(50.0), "25"), Ok(json!(25.0)));
        assert!(convert(&json!(50.0), "inf").is_err());
        assert_eq!(convert(&json!(true), "false"), Ok(json!(false)));
        assert!(convert(&json!(true), "yes").is_err());
        assert_eq!(convert(&json!("none"), "equal"), Ok(json!("equal")));
        assert!(convert(&json!({"a": 1}), "1")
            .unwrap_err()
            .contains("section"));
        let mut v = json!({"a": [1, 2]});
        assert!(set(&mut v, "a[1]", json!(7)));
        assert!(!set(&mut v, "a[2]", json!(7)));
        assert_eq!(v, json!({"a": [1, 7]}));
    }
}
