//! Geometry checks: radii, pitch, and conductors that overlap or touch in the r-z plane.

mod common;

use common::{at, check, close, minimal, ok, problems, remove, set};
use serde_json::json;

#[test]
fn inner_radius_gives_the_mean_radius() {
    let mut case = minimal();
    remove(&mut case, "coil.mean_radius");
    set(&mut case, "coil.inner_radius", json!("19 mm"));
    let (c, _) = ok(&case);
    // 19 mm + 2 mm / 2.
    assert!(close(c.coil.mean_radius, 20e-3));
}

#[test]
fn exactly_one_radius_is_required() {
    let mut case = minimal();
    set(&mut case, "coil.inner_radius", json!("19 mm"));
    assert_eq!(
        at(&problems(&case), "coil.inner_radius"),
        ["give either coil.mean_radius or coil.inner_radius, not both"]
    );
    remove(&mut case, "coil.inner_radius");
    remove(&mut case, "coil.mean_radius");
    assert_eq!(
        at(&problems(&case), "coil.mean_radius"),
        ["missing field (give coil.mean_radius or coil.inner_radius)"]
    );
}

#[test]
fn radial_thickness_must_leave_a_positive_inner_radius() {
    let mut case = minimal();
    set(&mut case, "coil.mean_radius", json!("2 mm"));
    set(&mut case, "coil.conductor.radial", json!("4 mm"));
    remove(&mut case, "workpiece");
    assert_eq!(
        at(&problems(&case), "coil.conductor.radial"),
        ["radial thickness 4 mm must be less than twice the mean radius (2 × 2 mm = 4 mm), else \
          the winding's inner radius is <= 0"]
    );
    set(&mut case, "coil.conductor.radial", json!("3.9 mm"));
    assert!(check(&case).is_ok());
    set(&mut case, "coil.inner_radius", json!("0 mm"));
    remove(&mut case, "coil.mean_radius");
    assert_eq!(at(&problems(&case), "coil.inner_radius"), ["must be > 0, got \"0 mm\""]);
}

#[test]
fn pitch_or_winding_length() {
    let mut case = minimal();
    remove(&mut case, "coil.pitch");
    assert_eq!(
        at(&problems(&case), "coil.pitch"),
        ["missing field (give coil.pitch or coil.winding_length when coil.turns > 1)"]
    );
    set(&mut case, "coil.winding_length", json!("16 mm"));
    let (c, _) = ok(&case);
    assert!(close(c.coil.pitch, 4e-3));
    set(&mut case, "coil.pitch", json!("4 mm"));
    assert_eq!(
        at(&problems(&case), "coil.winding_length"),
        ["give either coil.pitch or coil.winding_length, not both"]
    );
}

#[test]
fn overlapping_turns_are_refused() {
    let mut case = minimal();
    set(&mut case, "coil.pitch", json!("2.5 mm"));
    assert_eq!(
        at(&problems(&case), "coil.pitch"),
        ["turns overlap: pitch 2.5 mm is less than the conductor's axial width 3 mm \
          (coil.conductor.axial)"]
    );
    remove(&mut case, "coil.pitch");
    set(&mut case, "coil.winding_length", json!("10 mm"));
    assert_eq!(
        at(&problems(&case), "coil.winding_length"),
        ["turns overlap: 10 mm over 4 turns gives a pitch of 2.5 mm, less than the conductor's \
          axial width 3 mm (coil.conductor.axial)"]
    );
    // Touching turns (pitch equal to the width) are a continuous winding and pass, also
    // when the pitch comes from a division.
    set(&mut case, "coil.winding_length", json!("12 mm"));
    assert!(check(&case).is_ok());
    remove(&mut case, "coil.winding_length");
    set(&mut case, "coil.turns", json!(7));
    set(&mut case, "coil.conductor.axial", json!("0.3 mm"));
    set(&mut case, "coil.winding_length", json!("2.1 mm"));
    assert!(check(&case).is_ok());
}

#[test]
fn single_turn_ignores_pitch_with_a_warning() {
    let mut case = minimal();
    set(&mut case, "coil.turns", json!(1));
    let (c, warnings) = ok(&case);
    assert!(close(c.coil.pitch, 3e-3), "pitch equals the axial width");
    assert_eq!(warnings, ["coil.pitch: ignored for a single turn (the pitch is the axial width)"]);
    remove(&mut case, "coil.pitch");
    let (_, warnings) = ok(&case);
    assert!(warnings.is_empty());
}

#[test]
fn internal_coil_overlapping_the_tube() {
    // Coil conductor r = 19 to 21 mm; tube from 20.5 mm overlaps it.
    let mut case = minimal();
    set(&mut case, "workpiece.inner_radius", json!("20.5 mm"));
    assert_eq!(
        at(&problems(&case), "workpiece"),
        ["overlaps the coil (turns 1 to 4 of 4): the coil conductor spans r = 19 to 21 mm, the \
          tube r = 20.5 to 21.5 mm and z = -20 to 20 mm; conductors cannot share space"]
    );
}

#[test]
fn internal_coil_touching_the_tube() {
    // 19.5 mm + 1.5 mm lands on 21 mm only up to rounding: still touching.
    let mut case = minimal();
    set(&mut case, "coil.mean_radius", json!("19.5 mm"));
    set(&mut case, "coil.conductor.radial", json!("3 mm"));
    set(&mut case, "workpiece.inner_radius", json!("21 mm"));
    let p = problems(&case);
    let msg = at(&p, "workpiece");
    assert_eq!(msg.len(), 1, "{p:?}");
    assert!(msg[0].starts_with("touches the coil (turns 1 to 4 of 4) with no gap"), "{}", msg[0]);
    assert!(msg[0].contains("would need zero insulation"), "{}", msg[0]);
    set(&mut case, "workpiece.inner_radius", json!("21.01 mm"));
    assert!(check(&case).is_ok());
}

#[test]
fn external_coil_overlapping_and_clear_of_the_tube() {
    // Compression: a 4-turn coil around a tube of 10 to 12 mm radius.
    let mut case = minimal();
    set(&mut case, "workpiece.inner_radius", json!("10 mm"));
    set(&mut case, "workpiece.wall", json!("2 mm"));
    set(&mut case, "coil.mean_radius", json!("12.5 mm"));
    // Conductor r = 11.5 to 13.5 mm overlaps the wall.
    assert_eq!(
        at(&problems(&case), "workpiece"),
        ["overlaps the coil (turns 1 to 4 of 4): the coil conductor spans r = 11.5 to 13.5 mm, \
          the tube r = 10 to 12 mm and z = -20 to 20 mm; conductors cannot share space"]
    );
    // Conductor r = 12 to 14 mm touches the outer surface.
    set(&mut case, "coil.mean_radius", json!("13 mm"));
    let msg = at(&problems(&case), "workpiece");
    assert!(msg.len() == 1 && msg[0].starts_with("touches the coil"), "{msg:?}");
    set(&mut case, "coil.mean_radius", json!("14 mm"));
    assert!(check(&case).is_ok());
}

#[test]
fn axially_separated_conductors_do_not_overlap() {
    // Same radii, but the tube sits beyond the winding's end (winding z = -7.5 to 7.5 mm).
    let mut case = minimal();
    set(&mut case, "workpiece.inner_radius", json!("19.5 mm"));
    set(&mut case, "workpiece.length", json!("10 mm"));
    set(&mut case, "workpiece.z_center", json!("13 mm"));
    assert!(check(&case).is_ok());
    // Moving it to touch the last turn's end face (7.5 mm) is refused; only turn 4 is named.
    set(&mut case, "workpiece.z_center", json!("12.5 mm"));
    let msg = at(&problems(&case), "workpiece");
    assert!(msg.len() == 1 && msg[0].starts_with("touches the coil (turn 4 of 4)"), "{msg:?}");
    set(&mut case, "workpiece.z_center", json!("5 mm"));
    let msg = at(&problems(&case), "workpiece");
    assert!(
        msg.len() == 1 && msg[0].starts_with("overlaps the coil (turns 3 to 4 of 4)"),
        "{msg:?}"
    );
}

#[test]
fn tube_between_two_turns_is_clear() {
    // A thin ring at z = 0 sits in the 1 mm gap between turns 2 and 3 (pitch 4 mm, width 3 mm).
    let mut case = minimal();
    set(&mut case, "workpiece.inner_radius", json!("19.5 mm"));
    set(&mut case, "workpiece.wall", json!("0.5 mm"));
    set(&mut case, "workpiece.length", json!("0.5 mm"));
    assert!(check(&case).is_ok());
}

#[test]
fn workpiece_dimensions_must_be_positive() {
    let mut case = minimal();
    set(&mut case, "workpiece.wall", json!(0));
    set(&mut case, "workpiece.length", json!("-40 mm"));
    remove(&mut case, "workpiece.inner_radius");
    let p = problems(&case);
    assert_eq!(at(&p, "workpiece.wall"), ["must be > 0, got 0"]);
    assert_eq!(at(&p, "workpiece.length"), ["must be > 0, got \"-40 mm\""]);
    assert_eq!(at(&p, "workpiece.inner_radius"), ["missing field"]);
}

#[test]
fn workpiece_is_optional_and_z_center_defaults_to_zero() {
    let mut case = minimal();
    set(&mut case, "coil.z_center", json!("-5 mm"));
    let (c, _) = ok(&case);
    assert!(close(c.coil.z_center, -5e-3));
    assert_eq!(c.workpiece.as_ref().map(|t| t.z_center), Some(0.0));
    remove(&mut case, "workpiece");
    let (c, _) = ok(&case);
    assert_eq!(c.workpiece, None);
}
