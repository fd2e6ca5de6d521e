//! Discretization: coil turns and the workpiece wall split into coaxial filament rings.
//!
//! Every conductor section (a rectangle in the r-z plane) is split into near-square cells; each
//! cell is one filament ring of rectangular section carrying a uniform current density. The
//! default cell edge is one skin depth of that conductor's material at the estimated ringing
//! frequency (docs/theory.md, "Discretization"), with the aspect ratio of every cell kept at or
//! below `Discretization::max_aspect` so that the inductance matrix stays positive definite.
//!
//! Filaments are ordered coil first (turn by turn, each turn radial-major), then the workpiece
//! ring by ring from low z to high z, each ring from its inner layer outward.

use ringpulse_case::{Case, Coil, Resolution, Split, Tube};

/// Which conductor a filament belongs to.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Part {
    /// A sub-filament of coil turn `turn` (0 at the lowest z).
    Coil {
        /// Turn index.
        turn: usize,
    },
    /// A cell of workpiece axial ring `ring` (0 at the lowest z), radial layer `layer` (0 inner).
    Workpiece {
        /// Axial ring index.
        ring: usize,
        /// Radial layer index.
        layer: usize,
    },
}

/// One filament ring: a rectangular section revolved about the z axis.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Filament {
    /// Radius of the section centre, in metres.
    pub r: f64,
    /// Axial position of the section centre, in metres.
    pub z: f64,
    /// Radial size of the section, in metres.
    pub dr: f64,
    /// Axial size of the section, in metres.
    pub dz: f64,
    /// Resistivity of the material at the initial temperature, in ohm metres.
    pub resistivity: f64,
    /// Conductor the filament belongs to.
    pub part: Part,
}

impl Filament {
    /// Cross-section area, in square metres.
    pub fn area(&self) -> f64 {
        self.dr * self.dz
    }

    /// DC resistance of the ring, in ohms.
    pub fn resistance(&self) -> f64 {
        ringpulse_physics::inductance::ring_resistance(self.resistivity, self.r, self.dr, self.dz)
    }
}

/// Where the coil sits relative to the workpiece; decides which wall surface the pressure acts on.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Arrangement {
    /// Coil radially inside the tube (expansion): pressure on the inner surface, outward.
    CoilInside,
    /// Coil radially outside the tube (compression): pressure on the outer surface, inward.
    CoilOutside,
    /// Coil beside the workpiece along z (their radial ranges overlap): radial pressure is
    /// reported on the mean radius, positive outward.
    Beside,
}

/// The filament mesh of a case.
#[derive(Debug, Clone)]
pub struct Mesh {
    /// All filaments, coil first.
    pub filaments: Vec<Filament>,
    /// Number of coil turns.
    pub turns: usize,
    /// Filaments per coil turn, radial x axial.
    pub coil_split: Split,
    /// Workpiece split, radial layers x axial rings (`None` without workpiece).
    pub workpiece_split: Option<Split>,
    /// Coil position relative to the workpiece (`None` without workpiece).
    pub arrangement: Option<Arrangement>,
}

impl Mesh {
    /// Number of coil filaments.
    pub fn coil_filaments(&self) -> usize {
        self.turns * self.coil_split.radial * self.coil_split.axial
    }

    /// Number of workpiece filaments.
    pub fn workpiece_filaments(&self) -> usize {
        self.workpiece_split.map_or(0, |s| s.radial * s.axial)
    }

    /// Index of the first workpiece filament.
    pub fn workpiece_start(&self) -> usize {
        self.coil_filaments()
    }
}

/// Axial centre of coil turn `turn`, in metres.
pub fn turn_center(coil: &Coil, turn: usize) -> f64 {
    coil.z_center + (turn as f64 - (coil.turns as f64 - 1.0) / 2.0) * coil.pitch
}

/// Splits a `radial` x `axial` rectangle (metres) into cells of edge about `target` (metres)
/// whose aspect ratio does not exceed `max_aspect`.
///
/// Counts start at ceil(size / target) and the count along the longer cell side grows until
/// the aspect limit holds; the loop is bounded because each pass shortens the longer side.
pub fn split_rectangle(radial: f64, axial: f64, target: f64, max_aspect: f64) -> Split {
    let count = |size: f64| -> usize {
        // A tiny allowance keeps exact fits (size = k x target) from rounding up to k + 1 cells.
        let n = (size / target * (1.0 - 1e-9)).ceil();
        if n.is_finite() && n >= 1.0 {
            n.min(1.0e7) as usize
        } else {
            1
        }
    };
    let mut nr = count(radial);
    let mut nz = count(axial);
    for _ in 0..10_000 {
        let hr = radial / nr as f64;
        let hz = axial / nz as f64;
        if hr.max(hz) / hr.min(hz) <= max_aspect * (1.0 + 1e-12) {
            break;
        }
        if hr > hz {
            nr += 1;
        } else {
            nz += 1;
        }
    }
    Split { radial: nr, axial: nz }
}

/// Chosen cell splits before the filaments are laid out, so their count can be checked first.
#[derive(Debug, Clone, Copy)]
pub struct SplitPlan {
    /// Filaments per coil turn.
    pub coil: Split,
    /// Workpiece split (layers x rings).
    pub workpiece: Option<Split>,
}

impl SplitPlan {
    /// Total number of filaments the plan produces for `turns` coil turns.
    pub fn filaments(&self, turns: usize) -> usize {
        turns * self.coil.radial * self.coil.axial
            + self.workpiece.map_or(0, |s| s.radial * s.axial)
    }
}

/// Chooses the splits for a case: fixed splits win, else the resolution mode decides.
///
/// `frequency` is the estimated ringing frequency, in hertz (used by the skin-depth mode).
pub fn plan_splits(case: &Case, frequency: f64) -> SplitPlan {
    let aspect = case.discretization.max_aspect;
    let coil = &case.coil;
    let coil_split = coil.split.unwrap_or(match case.discretization.mode {
        Resolution::SkinDepth { cell_over_skin_depth } => {
            let delta = ringpulse_physics::em::skin_depth(coil.material.resistivity, frequency);
            split_rectangle(
                coil.radial_thickness,
                coil.axial_width,
                cell_over_skin_depth * delta,
                aspect,
            )
        }
        Resolution::Coarse { .. } => Split { radial: 1, axial: 1 },
    });
    let workpiece = case.workpiece.as_ref().map(|tube| {
        tube.split.unwrap_or(match case.discretization.mode {
            Resolution::SkinDepth { cell_over_skin_depth } => {
                let delta = ringpulse_physics::em::skin_depth(tube.material.resistivity, frequency);
                split_rectangle(tube.wall, tube.length, cell_over_skin_depth * delta, aspect)
            }
            Resolution::Coarse { tube_rings } => coarse_tube_split(tube, tube_rings, aspect),
        })
    });
    SplitPlan { coil: coil_split, workpiece }
}

/// The preview split of a tube: about `cells` near-square cells over the wall section, which is
/// one layer of `cells` rings for a long thin tube and a small block for a short thick ring.
pub fn coarse_tube_split(tube: &Tube, cells: usize, max_aspect: f64) -> Split {
    let target = (tube.wall * tube.length / cells.max(1) as f64).sqrt();
    split_rectangle(tube.wall, tube.length, target, max_aspect)
}

/// Lays out the filaments of a case according to a split plan.
pub fn build_mesh(case: &Case, plan: &SplitPlan) -> Mesh {
    let coil = &case.coil;
    let mut filaments = Vec::with_capacity(plan.filaments(coil.turns));
    let (nr, nz) = (plan.coil.radial, plan.coil.axial);
    let hr = coil.radial_thickness / nr as f64;
    let hz = coil.axial_width / nz as f64;
    let r_in = coil.mean_radius - coil.radial_thickness / 2.0;
    for turn in 0..coil.turns {
        let z0 = turn_center(coil, turn) - coil.axial_width / 2.0;
        for ir in 0..nr {
            for iz in 0..nz {
                filaments.push(Filament {
                    r: r_in + (ir as f64 + 0.5) * hr,
                    z: z0 + (iz as f64 + 0.5) * hz,
                    dr: hr,
                    dz: hz,
                    resistivity: coil.material.resistivity_at(case.initial_temperature),
                    part: Part::Coil { turn },
                });
            }
        }
    }
    let mut arrangement = None;
    if let (Some(tube), Some(split)) = (case.workpiece.as_ref(), plan.workpiece) {
        let hr = tube.wall / split.radial as f64;
        let hz = tube.length / split.axial as f64;
        let z0 = tube.z_center - tube.length / 2.0;
        for ring in 0..split.axial {
            for layer in 0..split.radial {
                filaments.push(Filament {
                    r: tube.inner_radius + (layer as f64 + 0.5) * hr,
                    z: z0 + (ring as f64 + 0.5) * hz,
                    dr: hr,
                    dz: hz,
                    resistivity: tube.material.resistivity_at(case.initial_temperature),
                    part: Part::Workpiece { ring, layer },
                });
            }
        }
        let coil_outer = coil.mean_radius + coil.radial_thickness / 2.0;
        arrangement = Some(if coil_outer <= tube.inner_radius {
            Arrangement::CoilInside
        } else if r_in >= tube.inner_radius + tube.wall {
            Arrangement::CoilOutside
        } else {
            Arrangement::Beside
        });
    }
    Mesh {
        filaments,
        turns: coil.turns,
        coil_split: plan.coil,
        workpiece_split: plan.workpiece,
        arrangement,
    }
}

/// Resistivity at a temperature from a linear law, in ohm metres.
pub trait ResistivityAt {
    /// rho(T) = rho_ref (1 + alpha (T - T_ref)), clamped to stay positive.
    fn resistivity_at(&self, temperature: f64) -> f64;
}

impl ResistivityAt for ringpulse_case::Material {
    fn resistivity_at(&self, temperature: f64) -> f64 {
        let factor =
            1.0 + self.temperature_coefficient * (temperature - self.reference_temperature);
        self.resistivity * factor.max(1e-3)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn split_keeps_aspect() {
        let s = split_rectangle(3e-3, 4e-3, 0.7e-3, 1.5);
        assert_eq!((s.radial, s.axial), (5, 6));
        let thin = split_rectangle(0.2e-3, 5e-3, 1e-3, 1.5);
        let (hr, hz) = (0.2e-3 / thin.radial as f64, 5e-3 / thin.axial as f64);
        assert!(hr.max(hz) / hr.min(hz) <= 1.5 + 1e-9, "aspect {hr} {hz}");
        assert_eq!(thin.radial, 1);
    }
}
