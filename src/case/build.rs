//! Building the `Exchanger` model from a validated `Case` (fluid tables are made here, once).

use super::spec::*;
use crate::model::{Exchanger, Stream};
use crate::transfer::{Channel, FilmCorrelation, FixedFilm, LaminarConstants, Wall, Zukauskas};
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
                let inside = Channel {
                    volume_per_length_m2: Some(PI * di * di / 4.0 * tubes_per_length),
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
        FilmSpec::Compact { surface, hydraulic_diameter_m, free_flow_area_m2, area_per_length_m } => {
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
