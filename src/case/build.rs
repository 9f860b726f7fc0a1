//! Building the `Exchanger` model from a validated `Case` (fluid tables are made here, once).

use super::spec::*;
use crate::model::{Exchanger, Stream};
use crate::transfer::losses::{return_bend_coefficient, Fittings, PASS_RETURN_VELOCITY_HEADS};
use crate::transfer::{BellDelaware, Channel, FilmCorrelation, FixedFilm, Kern, LaminarConstants, Wall, Zukauskas};
use std::f64::consts::PI;
use std::sync::Arc;

impl Case {
    /// Build the exchanger model (fluid tables are made here, once).
    pub fn build(&self) -> Exchanger {
        let l = self.length_m;
        let (wall, hot_channel, cold_channel, reference) = match &self.geometry {
            &Geometry::DoublePipe { di, d_o, ds, k, tube_side, annulus_equivalent_diameter } => {
                let tube = Channel::duct(PI * di * di / 4.0, di, PI * di, LaminarConstants::TUBE, l);
                let mut annulus = Channel::duct(PI * (ds * ds - d_o * d_o) / 4.0, ds - d_o, PI * d_o, LaminarConstants::annulus(d_o / ds), l);
                if annulus_equivalent_diameter {
                    annulus.heat_diameter_m = Some((ds * ds - d_o * d_o) / d_o);
                }
                let wall = Wall::Tube { inner_diameter_m: di, outer_diameter_m: d_o, conductivity_w_mk: k, tube_length_per_length: 1.0 };
                match tube_side {
                    TubeSide::Hot => (wall, tube, annulus, PI * d_o),
                    TubeSide::Cold => (wall, annulus, tube, PI * d_o),
                }
            }
            Geometry::PlaneWall { area_per_length, thickness, k, hot, cold } => {
                // Laminar: parallel plates heated on one side, the other insulated.
                let channel = |(a, d): (Option<f64>, Option<f64>)| Channel {
                    flow_area_m2: a,
                    hydraulic_diameter_m: d,
                    volume_per_length_m2: a,
                    ..Channel::duct(1.0, 1.0, *area_per_length, LaminarConstants::PLATES_ONE_SIDE, l)
                };
                let wall = Wall::Plane { thickness_m: *thickness, conductivity_w_mk: *k, area_per_length_m: *area_per_length };
                (wall, channel(*hot), channel(*cold), *area_per_length)
            }
            Geometry::TubeBank { di, k, tube_side, bank, tubes_per_row, tube_length, circuits } => {
                // Metres of tube per metre of bank depth.
                let tubes_per_length = *tubes_per_row as f64 * tube_length / bank.longitudinal_pitch_m;
                let d_o = bank.outer_diameter_m;
                // Each circuit threads rows × tubes_per_row / circuits tubes in series
                // (validation requires the division to be exact).
                let circuit_length = (bank.rows * tubes_per_row / circuits) as f64 * tube_length;
                let bends = (bank.rows * tubes_per_row / circuits) as f64 - 1.0;
                let inside = Channel {
                    volume_per_length_m2: Some(PI * di * di / 4.0 * tubes_per_length),
                    fittings: Fittings {
                        returns: (bends > 0.0).then(|| (bends, return_bend_coefficient(*di), "180° return bends per circuit (Crane K = 50 f_T)")),
                        ..Fittings::default()
                    },
                    ..Channel::duct(*circuits as f64 * PI * di * di / 4.0, *di, PI * di * tubes_per_length, LaminarConstants::TUBE, circuit_length)
                };
                let outside = Channel {
                    flow_area_m2: Some(bank.frontal_area_m2),
                    hydraulic_diameter_m: Some(d_o),
                    // Gas between the tubes: the bank's volume less the tubes'.
                    volume_per_length_m2: Some(
                        *tubes_per_row as f64 * tube_length * (bank.transverse_pitch_m * bank.longitudinal_pitch_m - PI * d_o * d_o / 4.0)
                            / bank.longitudinal_pitch_m,
                    ),
                    ..Channel::duct(1.0, 1.0, PI * d_o * tubes_per_length, LaminarConstants::TUBE, l)
                };
                let wall = Wall::Tube { inner_diameter_m: *di, outer_diameter_m: d_o, conductivity_w_mk: *k, tube_length_per_length: tubes_per_length };
                match tube_side {
                    TubeSide::Hot => (wall, inside, outside, PI * d_o * tubes_per_length),
                    TubeSide::Cold => (wall, outside, inside, PI * d_o * tubes_per_length),
                }
            }
            Geometry::ShellAndTube { di, k, tube_side, bundle, passes, nozzles } => {
                // Per metre of shell length, over all passes and shells.
                let tubes = (bundle.tubes * bundle.shells) as f64;
                let d_o = bundle.tube_outer_diameter_m;
                let per_pass = (bundle.tubes / passes) as f64 * PI * di * di / 4.0;
                let inside = Channel {
                    volume_per_length_m2: Some(tubes * PI * di * di / 4.0),
                    fittings: Fittings {
                        returns: Some(((passes * bundle.shells) as f64, PASS_RETURN_VELOCITY_HEADS, "tube passes (Kern's return loss)")),
                        nozzles: nozzles[0].map(|d| (d, bundle.shells)),
                        ..Fittings::default()
                    },
                    ..Channel::duct(per_pass, *di, tubes * PI * di, LaminarConstants::TUBE, l * (passes * bundle.shells) as f64)
                };
                let shell_side = tube_side.other();
                // The shell-side channel carries the method's own flow area and diameter, so
                // Re and the pressure-drop G are the method's (S_m and d, or A_s and D_e).
                let (area, diameter) = match &self.stream(shell_side).film {
                    FilmSpec::Shell { bell_delaware: false } => (bundle.kern_flow_area_m2(), bundle.kern_equivalent_diameter_m()),
                    _ => (bundle.areas().crossflow_area_m2, d_o),
                };
                let outside = Channel {
                    volume_per_length_m2: Some(bundle.volume_per_length_m2()),
                    fittings: Fittings { nozzles: nozzles[1].map(|d| (d, bundle.shells)), ..Fittings::default() },
                    ..Channel::duct(area, diameter, tubes * PI * d_o, LaminarConstants::TUBE, l * bundle.shells as f64)
                };
                let wall = Wall::Tube { inner_diameter_m: *di, outer_diameter_m: d_o, conductivity_w_mk: *k, tube_length_per_length: tubes };
                match tube_side {
                    TubeSide::Hot => (wall, inside, outside, PI * d_o * tubes),
                    TubeSide::Cold => (wall, outside, inside, PI * d_o * tubes),
                }
            }
        };
        Exchanger {
            arrangement: self.arrangement,
            length_m: l,
            hot: build_stream(&self.hot, hot_channel, &self.geometry),
            cold: build_stream(&self.cold, cold_channel, &self.geometry),
            wall,
            reference_area_per_length_m: reference,
            scheme: self.scheme,
        }
    }
}

pub(super) fn build_stream(s: &StreamSpec, mut channel: Channel, geometry: &Geometry) -> Stream {
    let fluid = s.fluid.build(s.pressure_pa).expect("fluid checked in validation");
    channel.roughness_m = s.roughness_m;
    let film: Arc<dyn FilmCorrelation> = match &s.film {
        FilmSpec::Internal(model) => Arc::new(model.clone()),
        FilmSpec::Fixed(h) => Arc::new(FixedFilm { h: *h }),
        FilmSpec::Zukauskas => match geometry {
            Geometry::TubeBank { bank, .. } => Arc::new(Zukauskas { bank: bank.clone() }),
            _ => unreachable!("validation allows zukauskas only on a tube bank"),
        },
        FilmSpec::Shell { bell_delaware } => match geometry {
            Geometry::ShellAndTube { bundle, .. } => {
                if *bell_delaware {
                    Arc::new(BellDelaware::new(bundle.clone()))
                } else {
                    Arc::new(Kern { bundle: bundle.clone() })
                }
            }
            _ => unreachable!("validation allows shell-side films only on a shell-and-tube geometry"),
        },
        FilmSpec::Compact { surface, hydraulic_diameter_m, free_flow_area_m2, area_per_length_m, sigma } => {
            // Kays & London K_d of the passages: 6/5 between plates, 4/3 in tubes.
            let kd = if channel.laminar == LaminarConstants::PLATES_ONE_SIDE { 1.2 } else { 4.0 / 3.0 };
            channel.fittings.core = sigma.map(|s| (s, kd));
            channel.flow_area_m2 = Some(*free_flow_area_m2);
            // Compact passages: void volume ≈ free-flow area × length (σ-based estimate).
            channel.volume_per_length_m2 = Some(*free_flow_area_m2);
            channel.hydraulic_diameter_m = Some(*hydraulic_diameter_m);
            channel.heat_diameter_m = None;
            channel.area_per_length_m = *area_per_length_m;
            Arc::new(surface.clone())
        }
    };
    Stream { fluid, mass_flow_kg_s: s.mass_flow_kg_s, inlet_c: s.inlet_c, inlet_pressure_pa: s.pressure_pa, fouling_m2k_w: s.fouling_m2k_w, film, channel }
}
