//! The explicit integrator: Dormand–Prince 5(4) from `ode_solvers`, with enthalpies scaled
//! into kelvin-like units so one absolute tolerance fits every state.

use super::model::*;
use super::*;
use nalgebra::DVector;

/// ode_solvers wrapper around the model. Its error control uses one absolute tolerance for
/// every component, so the fluid enthalpies are scaled by a reference cp per stream into
/// kelvin-like units, the same units as the wall temperatures.
pub(super) struct OdeSystem<'a, 'b> {
    pub(super) model: &'b Model<'a>,
    /// 1/cp_ref of the hot and cold fluids, kg·K/J.
    pub(super) scale: [f64; 2],
}

impl OdeSystem<'_, '_> {
    pub(super) fn unscale(&self, z: &DVector<f64>) -> DVector<f64> {
        let n = self.model.n;
        let mut y = z.clone();
        for i in 0..n {
            y[i] /= self.scale[0];
            y[n + i] /= self.scale[1];
        }
        y
    }
    pub(super) fn scale_state(&self, y: &DVector<f64>) -> DVector<f64> {
        let n = self.model.n;
        let mut z = y.clone();
        for i in 0..n {
            z[i] *= self.scale[0];
            z[n + i] *= self.scale[1];
        }
        z
    }
}

impl ode_solvers::System<f64, DVector<f64>> for OdeSystem<'_, '_> {
    fn system(&self, t: f64, z: &DVector<f64>, dz: &mut DVector<f64>) {
        let n = self.model.n;
        self.model.derivative(t, &self.unscale(z), dz);
        for i in 0..n {
            dz[i] *= self.scale[0];
            dz[n + i] *= self.scale[1];
        }
    }
}

pub(super) fn explicit_segment(
    model: &Model,
    t0: f64,
    t1: f64,
    y0: &DVector<f64>,
    settings: &TransientSettings,
) -> Result<(DVector<f64>, ode_solvers::dop_shared::Stats), TransientError> {
    // Sparse output (the state at every accepted step; the last is the segment end): the
    // dense-output mode did not give us the segment end state in this use.
    let scale = [1.0 / model.ex.hot.fluid.props(model.ex.hot.inlet_c).cp, 1.0 / model.ex.cold.fluid.props(model.ex.cold.inlet_c).cp];
    let system = OdeSystem { model, scale };
    let z0 = system.scale_state(y0);
    let c = DopriConfig { rtol: settings.rtol, atol: settings.atol_k, max_steps: settings.max_steps as u32, ..DopriConfig::default() };
    let mut stepper = ode_solvers::Dopri5::from_param(
        OdeSystem { model, scale },
        t0,
        t1,
        t1 - t0,
        z0,
        c.rtol,
        c.atol,
        c.safety,
        c.beta,
        c.fac_min,
        c.fac_max,
        t1 - t0, // largest step: the segment
        0.0,     // initial step: chosen by the integrator
        c.max_steps,
        c.stiffness_test_steps,
        ode_solvers::dop_shared::OutputType::Sparse,
    );
    let stats = stepper.integrate().map_err(|e| TransientError::Stalled { integrator: "explicit", time_s: t0, reason: format!("{e:?}") })?;
    let y = stepper.y_out().last().map(|z| system.unscale(z)).ok_or_else(|| TransientError::Stalled {
        integrator: "explicit",
        time_s: t0,
        reason: "no output".into(),
    })?;
    if !y.iter().all(|v| v.is_finite()) {
        return Err(TransientError::Stalled { integrator: "explicit", time_s: t0, reason: "non-finite state (unstable step)".into() });
    }
    Ok((y, stats))
}

/// The knobs of the Dormand–Prince integrator, named (its constructor takes them as 15
/// positional arguments). Defaults are Hairer's recommended values as used by `ode_solvers`.
#[derive(Debug, Clone, Copy)]
pub(super) struct DopriConfig {
    /// Relative tolerance.
    pub(super) rtol: f64,
    /// Absolute tolerance (kelvin-like units after scaling).
    pub(super) atol: f64,
    /// Safety factor of the step-size controller.
    pub(super) safety: f64,
    /// Step-size stabilisation exponent (Lund's β).
    pub(super) beta: f64,
    /// Smallest and largest step-size change per step (as the constructor's fac1, fac2).
    pub(super) fac_min: f64,
    pub(super) fac_max: f64,
    /// Step limit.
    pub(super) max_steps: u32,
    /// Steps between stiffness tests.
    pub(super) stiffness_test_steps: u32,
}

impl Default for DopriConfig {
    fn default() -> Self {
        Self { rtol: 1e-6, atol: 1e-4, safety: 0.9, beta: 0.04, fac_min: 0.2, fac_max: 10.0, max_steps: 5_000_000, stiffness_test_steps: 1000 }
    }
}
