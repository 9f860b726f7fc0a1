//! Fin efficiency and overall surface efficiency.
//!
//! Straight fin of uniform thickness with a convecting tip through the corrected length
//! L_c = L + t/2: η = tanh(mL_c)/(mL_c), m = √(2h/(k t)). Annular fin of uniform thickness:
//! η = [2r₁/(m(r₂c² − r₁²))]·[K₁(mr₁)I₁(mr₂c) − I₁(mr₁)K₁(mr₂c)]/[I₀(mr₁)K₁(mr₂c) + K₀(mr₁)I₁(mr₂c)],
//! r₂c = r₂ + t/2 (Incropera et al., Table 3.5). Overall surface efficiency
//! η_o = 1 − (A_f/A)(1 − η_f) (Incropera Eq. 11.3).

/// Fin shape.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Fin {
    /// Straight (plate) fin: height from base to tip, thickness, conductivity.
    Straight {
        /// m
        length_m: f64,
        /// m
        thickness_m: f64,
        /// W/(m·K)
        conductivity_w_mk: f64,
    },
    /// Annular (circular) fin on a tube.
    Annular {
        /// Root radius r₁, m.
        root_radius_m: f64,
        /// Tip radius r₂, m.
        tip_radius_m: f64,
        /// m
        thickness_m: f64,
        /// W/(m·K)
        conductivity_w_mk: f64,
    },
}

impl Fin {
    /// Fin efficiency at film coefficient `h`.
    pub fn efficiency(&self, h: f64) -> f64 {
        match *self {
            Fin::Straight { length_m, thickness_m, conductivity_w_mk } => {
                let m = (2.0 * h / (conductivity_w_mk * thickness_m)).sqrt();
                straight_efficiency(m * (length_m + 0.5 * thickness_m))
            }
            Fin::Annular { root_radius_m, tip_radius_m, thickness_m, conductivity_w_mk } => {
                let m = (2.0 * h / (conductivity_w_mk * thickness_m)).sqrt();
                annular_efficiency(m, root_radius_m, tip_radius_m + 0.5 * thickness_m)
            }
        }
    }
}

/// tanh(mL)/(mL), → 1 as mL → 0.
pub fn straight_efficiency(ml: f64) -> f64 {
    if ml < 1e-8 {
        1.0
    } else {
        ml.tanh() / ml
    }
}

/// Annular fin efficiency for m, root radius r1 and (corrected) tip radius r2c.
pub fn annular_efficiency(m: f64, r1: f64, r2c: f64) -> f64 {
    if m * (r2c - r1) < 1e-8 {
        return 1.0;
    }
    let (a, b) = (m * r1, m * r2c);
    let num = bessel_k1(a) * bessel_i1(b) - bessel_i1(a) * bessel_k1(b);
    let den = bessel_i0(a) * bessel_k1(b) + bessel_k0(a) * bessel_i1(b);
    2.0 * r1 / (m * (r2c * r2c - r1 * r1)) * num / den
}

/// Overall surface efficiency η_o = 1 − (A_f/A)(1 − η_f).
pub fn surface_efficiency(fin_area_fraction: f64, fin_efficiency: f64) -> f64 {
    1.0 - fin_area_fraction * (1.0 - fin_efficiency)
}

// Modified Bessel functions: polynomial approximations of Abramowitz & Stegun,
// *Handbook of Mathematical Functions* (1964), 9.8.1–9.8.8 (|ε| < 2e-7 relative).

/// I₀(x), x ≥ 0.
pub fn bessel_i0(x: f64) -> f64 {
    if x <= 3.75 {
        let t = (x / 3.75).powi(2);
        1.0 + t * (3.5156229 + t * (3.0899424 + t * (1.2067492 + t * (0.2659732 + t * (0.0360768 + t * 0.0045813)))))
    } else {
        let t = 3.75 / x;
        (x.exp() / x.sqrt())
            * (0.39894228
                + t * (0.01328592
                    + t * (0.00225319 + t * (-0.00157565 + t * (0.00916281 + t * (-0.02057706 + t * (0.02635537 + t * (-0.01647633 + t * 0.00392377))))))))
    }
}

/// I₁(x), x ≥ 0.
pub fn bessel_i1(x: f64) -> f64 {
    if x <= 3.75 {
        let t = (x / 3.75).powi(2);
        x * (0.5 + t * (0.87890594 + t * (0.51498869 + t * (0.15084934 + t * (0.02658733 + t * (0.00301532 + t * 0.00032411))))))
    } else {
        let t = 3.75 / x;
        (x.exp() / x.sqrt())
            * (0.39894228
                + t * (-0.03988024
                    + t * (-0.00362018 + t * (0.00163801 + t * (-0.01031555 + t * (0.02282967 + t * (-0.02895312 + t * (0.01787654 - t * 0.00420059))))))))
    }
}

/// K₀(x), x > 0.
pub fn bessel_k0(x: f64) -> f64 {
    if x <= 2.0 {
        let t = x * x / 4.0;
        -(x / 2.0).ln() * bessel_i0(x)
            + (-0.57721566 + t * (0.42278420 + t * (0.23069756 + t * (0.03488590 + t * (0.00262698 + t * (0.00010750 + t * 0.0000074))))))
    } else {
        let t = 2.0 / x;
        ((-x).exp() / x.sqrt())
            * (1.25331414 + t * (-0.07832358 + t * (0.02189568 + t * (-0.01062446 + t * (0.00587872 + t * (-0.00251540 + t * 0.00053208))))))
    }
}

/// K₁(x), x > 0.
pub fn bessel_k1(x: f64) -> f64 {
    if x <= 2.0 {
        let t = x * x / 4.0;
        (x / 2.0).ln() * bessel_i1(x)
            + (1.0 / x) * (1.0 + t * (0.15443144 + t * (-0.67278579 + t * (-0.18156897 + t * (-0.01919402 + t * (-0.00110404 - t * 0.00004686))))))
    } else {
        let t = 2.0 / x;
        ((-x).exp() / x.sqrt()) * (1.25331414 + t * (0.23498619 + t * (-0.03655620 + t * (0.01504268 + t * (-0.00780353 + t * (0.00325614 - t * 0.00068245))))))
    }
}
