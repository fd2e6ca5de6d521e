//! A complete example case, for `ringpulse`'s "write me an example" command and for tests.
//!
//! JSON has no comments, so every object carries a `"notes"` string that explains each of
//! its fields with unit and default; validation ignores notes. The scenario is invented: an
//! aluminium 6061-T6 tube of 50 mm inner diameter, 1.5 mm wall and 60 mm length, expanded by
//! a 6-turn copper coil inside it.

/// The example case as pretty-printed JSON. It validates without warnings.
pub fn example_case_json() -> String {
    EXAMPLE.to_string()
}

const EXAMPLE: &str = r#"{
  "description": "Expansion of an aluminium 6061-T6 tube (50 mm inner diameter, 1.5 mm wall, 60 mm long) by a 6-turn internal copper coil on a 200 uF, 8 kV bank",
  "notes": "An invented example showing every section. Quantities are JSON numbers in SI units, or strings of a number and a unit such as \"8 kV\", \"1.5 mm\" or \"20 us\" (prefixes p n u µ m k M G; c only in cm). description: one line, required. initial_temperature: temperature of all conductors at switch closing, K or degC, default 293.15 K, must be above 0 K and below both melting points. A \"notes\" string is allowed in every object and ignored.",
  "bank": {
    "notes": "capacitance: bank capacitance, F, required, > 0. voltage: charging voltage at switch closing, V, required, > 0. inductance: internal inductance of bank and switch, H, default 0, >= 0. resistance: internal resistance of bank and switch, Ohm, default 0, >= 0. crowbar: optional object; its presence adds a crowbar across the capacitor that closes when the capacitor voltage first reaches zero. Stored energy here: 0.5 * 200 uF * (8 kV)^2 = 6.4 kJ.",
    "capacitance": "200 uF",
    "voltage": "8 kV",
    "inductance": "50 nH",
    "resistance": "2 mOhm",
    "crowbar": {
      "notes": "resistance: crowbar path resistance, Ohm, default 0, >= 0. inductance: crowbar path inductance, H, default 0, >= 0. Delete this object to run without a crowbar.",
      "resistance": "1 mOhm",
      "inductance": "0 nH"
    }
  },
  "feeder": {
    "notes": "Cable or bus between bank and coil; the whole object is optional. inductance: H, default 0, >= 0. resistance: Ohm, default 0, >= 0.",
    "inductance": "30 nH",
    "resistance": "1 mOhm"
  },
  "coil": {
    "notes": "turns: number of turns, integer >= 1, required. mean_radius: radius of the conductor centre, m, > 0; give it or inner_radius (m, > 0), not both. conductor: rectangular cross-section, required. pitch: axial distance between turn centres, m, >= conductor.axial; or winding_length = turns * pitch (m); exactly one of the two is required when turns > 1, and neither is used for one turn. z_center: axial centre of the winding, m, default 0. material: a built-in name (copper, copper_ofhc, aluminium_1050, aluminium_6061_t6, aluminium_6063_t6, brass, steel_1010, stainless_304, titanium_grade2) or an object {\"base\": \"copper\", \"resistivity\": \"1.75e-8 Ohm m\", ...}. split: optional {\"radial\": 3, \"axial\": 4} filaments per turn instead of the automatic split. hold: what a sweep of turns keeps fixed, \"pitch\" (default) or \"winding_length\". Here the winding spans r = 19.5 to 22.5 mm, leaving a 2.5 mm gap to the tube.",
    "turns": 6,
    "mean_radius": "21 mm",
    "conductor": {
      "notes": "radial: radial thickness of the conductor, m, required, > 0 and < 2 * mean_radius. axial: axial width of the conductor, m, required, > 0.",
      "radial": "3 mm",
      "axial": "4 mm"
    },
    "pitch": "5 mm",
    "z_center": "0 mm",
    "material": "copper",
    "hold": "pitch"
  },
  "workpiece": {
    "notes": "Optional: without it the bank discharges into the coil alone. inner_radius: m, required, > 0. wall: wall thickness, m, required, > 0. length: axial length, m, required, > 0. z_center: axial centre, m, default 0. material: as for the coil. split: optional {\"radial\": 2, \"axial\": 60} fixed filaments. The tube must not overlap or touch any coil turn.",
    "inner_radius": "25 mm",
    "wall": "1.5 mm",
    "length": "60 mm",
    "z_center": "0 mm",
    "material": "aluminium_6061_t6"
  },
  "discretization": {
    "notes": "Optional. resolution: \"skin_depth\" (default; near-square cells of cell_over_skin_depth skin depths at the estimated ringing frequency) or \"coarse\" (one filament per turn, the tube in coarse_tube_rings rings). cell_over_skin_depth: plain number, default 1.0, > 0 (0.5 is twice as fine). coarse_tube_rings: integer, default 40, >= 1. max_filaments: integer, default 4000, 1 to 20000; more filaments are refused. max_aspect: largest cell aspect ratio, default 1.5, >= 1.",
    "resolution": "skin_depth",
    "cell_over_skin_depth": 1.0,
    "coarse_tube_rings": 40,
    "max_filaments": 4000,
    "max_aspect": 1.5
  },
  "solver": {
    "notes": "Optional. rel_tol: relative tolerance, in (0, 0.01], default 1e-6 with motion and 1e-7 at fixed geometry. abs_tol: absolute tolerance on the scaled state, > 0, default 1e-6 with motion and 1e-9 at fixed geometry. end_time: s, > 0, default three estimated ringing periods. output_step: output sampling interval, s, > 0, default end_time / 1000 (end_time / 500 with motion); at most 1e6 samples.",
    "rel_tol": 1e-6,
    "abs_tol": 1e-6,
    "end_time": "300 us",
    "output_step": "0.1 us"
  },
  "motion": {
    "notes": "Optional; \"motion\": false keeps the geometry fixed. enabled: true or false, default true when there is a workpiece. stop_radius: a rigid die at or beyond the tube's outer surface, or a mandrel at or within its inner surface, m, default none; here a die 2.5 mm outside the tube. flow_stress: optional law of the workpiece, e.g. {\"law\": \"johnson_cook\", \"set\": \"aluminium_6061_t6\"}, {\"law\": \"power\", \"k\": \"410 MPa\", \"n\": 0.05} or {\"law\": \"constant\", \"stress\": \"276 MPa\"}; default chosen from the material (docs/case-format.md).",
    "enabled": true,
    "stop_radius": "29 mm"
  },
  "initial_temperature": "20 degC",
  "ratings": {
    "notes": "Optional limits that ringpulse check compares the run against; each limit is optional and must be > 0, an absent one is not checked. The numbers here are invented for the example: take yours from the makers' data sheets. Margin = (limit - value) / limit.",
    "switch": {
      "notes": "peak_current: A. peak_di_dt: A/s, e.g. \"30 kA/us\". charge: charge per shot, integral of |i| dt, C. action_integral: integral of i^2 dt, A2s (a prefix scales the whole unit: \"2 MA2s\" is 2e6 A2s). reverse_current: largest current of the opposite sign to the first peak, % of that peak.",
      "peak_current": "200 kA",
      "peak_di_dt": "30 kA/us",
      "charge": "20 C",
      "action_integral": "2 MA2s",
      "reverse_current": "30 %"
    },
    "capacitors": {
      "notes": "voltage: rated voltage, compared with bank.voltage, V. voltage_reversal: allowed reversal, % of the charging voltage. peak_current: rating of one unit, A. units: number of equal units in parallel sharing the bank current, integer, default 1.",
      "voltage": "10 kV",
      "voltage_reversal": "20 %",
      "peak_current": "50 kA",
      "units": 4
    },
    "coil": {
      "notes": "With this object the turns' hoop stress is checked against allowed_hoop_stress (Pa), or, if that is absent, against the coil material's yield strength / safety_factor (plain number >= 1, default 2); give at most one of the two. temperature_rise: allowed rise of the hottest coil filament over initial_temperature, K.",
      "temperature_rise": "150 K",
      "allowed_hoop_stress": "300 MPa"
    },
    "feeder": {
      "notes": "peak_current: A. action_integral: A2s.",
      "peak_current": "200 kA",
      "action_integral": "2 MA2s"
    }
  }
}
"#;

#[cfg(test)]
mod tests {
    use super::*;
    use serde_json::Value;

    fn objects_without_notes(v: &Value, path: &str, out: &mut Vec<String>) {
        if let Value::Object(map) = v {
            if !map.get("notes").is_some_and(Value::is_string) {
                out.push(path.to_string());
            }
            for (k, child) in map {
                objects_without_notes(child, &format!("{path}.{k}"), out);
            }
        }
    }

    #[test]
    fn every_object_has_notes() {
        let value: Value = serde_json::from_str(&example_case_json()).unwrap_or(Value::Null);
        assert!(value.is_object());
        let mut missing = Vec::new();
        objects_without_notes(&value, "(top)", &mut missing);
        assert!(missing.is_empty(), "objects without notes: {missing:?}");
    }
}
