//! JSON output details shared by every command: settings written as the
//! analyst would type them.
//!
//! A setting derived by arithmetic carries the rounding noise of binary
//! floating point (`1 - 0.95` is `0.050000000000000044`). Before a result
//! is written, [`tidy_settings`] rounds every setting key to
//! [`SETTING_DIGITS`] significant digits; estimates are never touched.

use serde_json::Value;

/// Significant digits kept for settings.
pub const SETTING_DIGITS: i32 = 12;

/// The keys that hold settings (levels, significance levels, the
/// proportion `q` of a robustness value), wherever they appear.
pub const SETTING_KEYS: [&str; 3] = ["alpha", "level", "q"];

/// `v` rounded to [`SETTING_DIGITS`] significant digits (0.05 for
/// `1.0 - 0.95`).
pub fn setting(v: f64) -> f64 {
    if !v.is_finite() || v == 0.0 {
        return v;
    }
    let s = format!("{:.*e}", (SETTING_DIGITS - 1) as usize, v);
    s.parse().unwrap_or(v)
}

/// Rounds every setting key of `value` (at any depth) with [`setting`].
pub fn tidy_settings(value: &mut Value) {
    match value {
        Value::Object(m) => {
            for (k, v) in m.iter_mut() {
                match v {
                    Value::Number(n) if SETTING_KEYS.contains(&k.as_str()) => {
                        if let Some(x) = n.as_f64().filter(|_| n.is_f64())
                            && let Some(r) = serde_json::Number::from_f64(setting(x))
                        {
                            *n = r;
                        }
                    }
                    _ => tidy_settings(v),
                }
            }
        }
        Value::Array(a) => a.iter_mut().for_each(tidy_settings),
        _ => {}
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use serde_json::json;

    #[test]
    fn settings_lose_their_noise_and_estimates_keep_theirs() {
        assert_eq!(1.0 - 0.95, 0.050000000000000044);
        assert_eq!(setting(1.0 - 0.95), 0.05);
        assert_eq!(setting(1.0 - 0.9), 0.1);
        assert_eq!(setting(0.95), 0.95);
        assert_eq!(setting(0.0), 0.0);
        let mut v = json!({"alpha": 1.0 - 0.95, "rv": 1.0 - 0.95, "level": 0.95, "q": 1,
            "runs": [{"sensitivity": {"robustness_value": {"alpha": 1.0 - 0.95}}}]});
        tidy_settings(&mut v);
        assert_eq!(v["alpha"].to_string(), "0.05");
        assert_eq!(v["rv"].to_string(), "0.050000000000000044");
        assert_eq!(v["q"].to_string(), "1");
        assert_eq!(
            v["runs"][0]["sensitivity"]["robustness_value"]["alpha"].to_string(),
            "0.05"
        );
    }
}
