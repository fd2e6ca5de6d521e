//! Variants of a case: a full factorial or a Latin-hypercube sample of the `--vary` values,
//! and how one variant's values are written into the case JSON.
//!
//! Full factorial: every combination, the first `--vary` changing slowest (row-major order).
//! Latin hypercube of K points: each varied range is cut into K equal strata and every
//! stratum is used exactly once per field; a range `lo..hi[:n]` is sampled as the continuous
//! interval [lo, hi] (the count is ignored; integer fields are rounded), a list `a,b,c` as
//! its values. The random numbers come from splitmix64 (Steele, Lea and Flood, "Fast
//! splittable pseudorandom number generators", OOPSLA 2014) seeded with `--seed`, so the same
//! seed gives the same variants on every machine.
//!
//! Writing a variant into the case: the value goes at the field's path (objects on the way
//! are created; a material given by name becomes `{"base": name}` so a property can be
//! overridden). The coil's spacing is then made consistent: a varied `pitch` replaces
//! `winding_length` and the other way round, a varied `mean_radius` replaces `inner_radius`
//! and the other way round, and when `turns` varies the case's `coil.hold` decides whether
//! the pitch (default) or the winding length of the base case is kept.

use ringpulse_case::Case;
use serde_json::{Map, Number, Value};

use crate::spec::{Values, VarySpec};
use crate::{spec_error, StudyError};

/// Most variants one sweep may have.
pub const MAX_VARIANTS: usize = 100_000;

/// How the variants are chosen.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Design {
    /// Every combination of the levels.
    Factorial,
    /// A Latin-hypercube sample.
    LatinHypercube {
        /// Number of points. Must be >= 1.
        points: usize,
        /// Seed of the random generator.
        seed: u64,
    },
}

/// One variant: its index (from 0, in output order) and one SI value per `--vary`.
#[derive(Debug, Clone, PartialEq)]
pub struct Variant {
    /// Index from 0; rows are written in this order.
    pub index: usize,
    /// The values, in the order of the specs.
    pub values: Vec<f64>,
}

/// The splitmix64 generator (Steele, Lea and Flood 2014): 64 bits of state, full period.
#[derive(Debug, Clone)]
pub struct SplitMix64 {
    state: u64,
}

impl SplitMix64 {
    /// A generator with the given seed.
    pub fn new(seed: u64) -> Self {
        SplitMix64 { state: seed }
    }

    /// The next 64 random bits.
    pub fn next_u64(&mut self) -> u64 {
        self.state = self.state.wrapping_add(0x9e37_79b9_7f4a_7c15);
        let mut z = self.state;
        z = (z ^ (z >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
        z ^ (z >> 31)
    }

    /// A uniform number in [0, 1) with 53 random bits.
    pub fn next_f64(&mut self) -> f64 {
        (self.next_u64() >> 11) as f64 * (1.0 / (1u64 << 53) as f64)
    }

    /// A uniform integer in [0, n), n >= 1 (Lemire's multiply-shift; the bias is below 2^-32
    /// for the sizes used here).
    pub fn below(&mut self, n: usize) -> usize {
        ((self.next_u64() as u128 * n as u128) >> 64) as usize
    }
}

/// The variants of a sweep.
pub fn generate(specs: &[VarySpec], design: &Design) -> Result<Vec<Variant>, StudyError> {
    for (k, s) in specs.iter().enumerate() {
        if specs[..k].iter().any(|o| o.path == s.path) {
            return Err(spec_error("--vary", &s.text, format!("{} is varied twice", s.path)));
        }
    }
    match *design {
        Design::Factorial => factorial(specs),
        Design::LatinHypercube { points, seed } => latin_hypercube(specs, points, seed),
    }
}

fn factorial(specs: &[VarySpec]) -> Result<Vec<Variant>, StudyError> {
    let levels = specs.iter().map(VarySpec::levels).collect::<Result<Vec<_>, _>>()?;
    let total = levels.iter().try_fold(1usize, |acc, l| acc.checked_mul(l.len()));
    match total {
        Some(n) if n <= MAX_VARIANTS => {}
        _ => {
            let text: Vec<&str> = specs.iter().map(|s| s.text.as_str()).collect();
            let sizes: Vec<String> = levels.iter().map(|l| l.len().to_string()).collect();
            return Err(spec_error(
                "--vary",
                &text.join(" "),
                format!(
                    "the full factorial has {} variants, more than the limit of {MAX_VARIANTS}; \
                     use fewer values or --lhs",
                    sizes.join(" x ")
                ),
            ));
        }
    }
    let total = total.unwrap_or(0);
    let mut out = Vec::with_capacity(total);
    for index in 0..total {
        // Row-major: the last spec changes fastest.
        let mut rest = index;
        let mut values = vec![0.0; specs.len()];
        for d in (0..specs.len()).rev() {
            let n = levels[d].len();
            values[d] = levels[d][rest % n];
            rest /= n;
        }
        out.push(Variant { index, values });
    }
    Ok(out)
}

fn latin_hypercube(
    specs: &[VarySpec],
    points: usize,
    seed: u64,
) -> Result<Vec<Variant>, StudyError> {
    if points == 0 || points > MAX_VARIANTS {
        return Err(spec_error(
            "--lhs",
            &points.to_string(),
            format!("expected a number of points from 1 to {MAX_VARIANTS}"),
        ));
    }
    let mut rng = SplitMix64::new(seed);
    let mut columns: Vec<Vec<f64>> = Vec::with_capacity(specs.len());
    for spec in specs {
        // A random permutation of the strata (Fisher-Yates), then a uniform point in each.
        let mut strata: Vec<usize> = (0..points).collect();
        for k in (1..points).rev() {
            let j = rng.below(k + 1);
            strata.swap(k, j);
        }
        let mut column = Vec::with_capacity(points);
        for &stratum in &strata {
            let u = (stratum as f64 + rng.next_f64()) / points as f64;
            let x = match &spec.values {
                Values::List(v) => {
                    let k = ((u * v.len() as f64) as usize).min(v.len().saturating_sub(1));
                    v.get(k).copied().unwrap_or(f64::NAN)
                }
                Values::Range { lo, hi, .. } => {
                    let x = lo + u * (hi - lo);
                    if spec.is_count() {
                        x.round().clamp(*lo, *hi)
                    } else {
                        x
                    }
                }
            };
            column.push(x);
        }
        columns.push(column);
    }
    Ok((0..points)
        .map(|index| Variant { index, values: columns.iter().map(|c| c[index]).collect() })
        .collect())
}

/// What `coil.hold` asks a change of turns to keep.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Hold {
    /// Keep the pitch; the winding grows with the turns.
    Pitch,
    /// Keep the winding length; the pitch is winding_length / turns.
    WindingLength,
}

impl Hold {
    /// The hold of a case file's JSON (validation has checked the value).
    pub fn of(json: &Value) -> Hold {
        match json.pointer("/coil/hold").and_then(Value::as_str) {
            Some("winding_length") => Hold::WindingLength,
            _ => Hold::Pitch,
        }
    }
}

/// The JSON number for a value: an integer for counts, else the f64.
fn number(value: f64, count: bool) -> Value {
    if count && value >= 0.0 && value <= u64::MAX as f64 {
        Value::Number(Number::from(value as u64))
    } else {
        Number::from_f64(value).map_or(Value::Null, Value::Number)
    }
}

/// Sets `value` at a dotted `path` inside `root`, creating objects on the way.
fn set_path(root: &mut Value, path: &str, value: Value) -> Result<(), String> {
    let keys: Vec<&str> = path.split('.').collect();
    let mut node = root;
    for (depth, key) in keys.iter().enumerate() {
        if node.is_null() {
            *node = Value::Object(Map::new());
        }
        // A material given by name becomes an object based on it, so a property can be set.
        if let Value::String(name) = node {
            if depth > 0 && keys[depth - 1] == "material" {
                let mut m = Map::new();
                m.insert("base".into(), Value::String(name.clone()));
                *node = Value::Object(m);
            }
        }
        let Value::Object(map) = node else {
            return Err(format!(
                "cannot set {path}: {} is not an object in the case",
                keys[..depth].join(".")
            ));
        };
        if depth + 1 == keys.len() {
            map.insert((*key).to_string(), value);
            return Ok(());
        }
        node = map.entry((*key).to_string()).or_insert(Value::Null);
    }
    Ok(())
}

fn remove_path(root: &mut Value, parent: &str, key: &str) {
    if let Some(Value::Object(map)) = root.pointer_mut(&format!("/{}", parent.replace('.', "/"))) {
        map.remove(key);
    }
}

/// The case JSON of one variant: `base` with `values` written at the specs' paths and the coil
/// spacing made consistent (see the module doc). `base_case` is the validated base, whose
/// pitch and turns a change of turns starts from.
pub fn apply(
    base: &Value,
    base_case: &Case,
    specs: &[VarySpec],
    values: &[f64],
) -> Result<Value, String> {
    let mut json = base.clone();
    let varied = |p: &str| specs.iter().any(|s| s.path == p);
    for (spec, &v) in specs.iter().zip(values) {
        set_path(&mut json, &spec.path, number(v, spec.is_count()))?;
    }
    if varied("coil.mean_radius") && !varied("coil.inner_radius") {
        remove_path(&mut json, "coil", "inner_radius");
    } else if varied("coil.inner_radius") && !varied("coil.mean_radius") {
        remove_path(&mut json, "coil", "mean_radius");
    }
    if varied("coil.pitch") {
        if !varied("coil.winding_length") {
            remove_path(&mut json, "coil", "winding_length");
        }
    } else if varied("coil.winding_length") {
        remove_path(&mut json, "coil", "pitch");
    } else if varied("coil.turns") {
        let coil = &base_case.coil;
        match Hold::of(base) {
            Hold::Pitch => {
                remove_path(&mut json, "coil", "winding_length");
                set_path(&mut json, "coil.pitch", number(coil.pitch, false))?;
            }
            Hold::WindingLength => {
                remove_path(&mut json, "coil", "pitch");
                let length = coil.pitch * coil.turns as f64;
                set_path(&mut json, "coil.winding_length", number(length, false))?;
            }
        }
    }
    Ok(json)
}

#[cfg(test)]
#[allow(clippy::panic, clippy::unwrap_used)]
mod tests {
    use super::*;
    use crate::spec::parse_vary;

    fn specs(texts: &[&str]) -> Vec<VarySpec> {
        texts.iter().map(|t| parse_vary(t).unwrap()).collect()
    }

    /// The first outputs of splitmix64 for seed 0, 0xe220a8397b1dcdaf, 0x6e789e6aa1b965f4,
    /// 0x06c45d188009454f: the values of Vigna's reference C implementation (splitmix64.c),
    /// reproduced here by an independent 64-bit Python transcription of the same algorithm.
    #[test]
    fn splitmix64_matches_reference_values() {
        let mut r = SplitMix64::new(0);
        let got: Vec<u64> = (0..3).map(|_| r.next_u64()).collect();
        assert_eq!(got, [0xe220_a839_7b1d_cdaf, 0x6e78_9e6a_a1b9_65f4, 0x06c4_5d18_8009_454f]);
        let u = SplitMix64::new(0).next_f64();
        assert!((0.0..1.0).contains(&u));
    }

    #[test]
    fn factorial_is_row_major() {
        let s = specs(&["coil.turns=2..3", "bank.voltage=1kV,2kV,3kV"]);
        let v = generate(&s, &Design::Factorial).unwrap();
        let values: Vec<Vec<f64>> = v.iter().map(|x| x.values.clone()).collect();
        assert_eq!(
            values,
            [[2.0, 1e3], [2.0, 2e3], [2.0, 3e3], [3.0, 1e3], [3.0, 2e3], [3.0, 3e3]]
        );
        assert!(v.iter().enumerate().all(|(k, x)| x.index == k));
    }

    /// Each of the K strata of every field holds exactly one point.
    #[test]
    fn latin_hypercube_uses_every_stratum_once() {
        let s = specs(&["bank.voltage=4kV..10kV", "coil.pitch=5mm..7mm:3"]);
        let k = 50;
        let v = generate(&s, &Design::LatinHypercube { points: k, seed: 7 }).unwrap();
        assert_eq!(v.len(), k);
        for (d, (lo, hi)) in [(4e3, 10e3), (5e-3, 7e-3)].into_iter().enumerate() {
            let mut seen = vec![0; k];
            for x in &v {
                let u = (x.values[d] - lo) / (hi - lo);
                assert!((0.0..1.0).contains(&u));
                seen[(u * k as f64) as usize] += 1;
            }
            assert!(seen.iter().all(|&c| c == 1), "field {d}: {seen:?}");
        }
        let again = generate(&s, &Design::LatinHypercube { points: k, seed: 7 }).unwrap();
        assert_eq!(v, again);
        let other = generate(&s, &Design::LatinHypercube { points: k, seed: 8 }).unwrap();
        assert_ne!(v, other);
    }

    #[test]
    fn duplicate_and_huge_sweeps_are_refused() {
        let s = specs(&["coil.turns=2..3", "coil.turns=4..5"]);
        assert!(generate(&s, &Design::Factorial).is_err());
        let s = specs(&["bank.voltage=1..2:1000", "bank.capacitance=1..2:1000"]);
        let e = generate(&s, &Design::Factorial).unwrap_err().to_string();
        assert!(e.contains("1000 x 1000 variants"), "{e}");
    }

    #[test]
    fn set_path_creates_objects_and_overrides_materials() {
        let mut j = serde_json::json!({"coil": {"material": "copper"}});
        set_path(&mut j, "feeder.inductance", Value::from(1e-9)).unwrap();
        set_path(&mut j, "coil.material.resistivity", Value::from(2e-8)).unwrap();
        assert_eq!(
            j,
            serde_json::json!({
                "coil": {"material": {"base": "copper", "resistivity": 2e-8}},
                "feeder": {"inductance": 1e-9}
            })
        );
        let mut j = serde_json::json!({"bank": 3});
        assert!(set_path(&mut j, "bank.voltage", Value::from(1.0)).is_err());
    }
}
