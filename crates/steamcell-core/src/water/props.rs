//! The full thermodynamic property set of one single-phase state, and its construction from the
//! derivatives of a fundamental equation (a Gibbs function g(p,T) or a Helmholtz function f(rho,T)).
//!
//! Units (internal, the IAPWS releases' own): p MPa, T K, v m3/kg, rho kg/m3, u h kJ/kg,
//! s cp cv kJ/(kg K), w m/s, alpha_v 1/K, kappa_t 1/MPa, mu_jt K/MPa; kappa and z dimensionless.
//!
//! Invariant: every field is computed from the same set of derivatives at one (p,T) or (rho,T);
//! nothing here iterates.

/// Every thermodynamic property of a single-phase state (internal units, see the module doc).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Props {
    /// Pressure, MPa.
    pub p: f64,
    /// Temperature, K.
    pub t: f64,
    /// Specific volume, m3/kg.
    pub v: f64,
    /// Density, kg/m3.
    pub rho: f64,
    /// Specific internal energy, kJ/kg.
    pub u: f64,
    /// Specific enthalpy, kJ/kg.
    pub h: f64,
    /// Specific entropy, kJ/(kg K).
    pub s: f64,
    /// Specific isobaric heat capacity, kJ/(kg K).
    pub cp: f64,
    /// Specific isochoric heat capacity, kJ/(kg K).
    pub cv: f64,
    /// Speed of sound, m/s.
    pub w: f64,
    /// Isentropic exponent kappa = -(v/p)(dp/dv)_s = w^2 / (p v), dimensionless.
    pub kappa: f64,
    /// Joule-Thomson coefficient (dT/dp)_h, K/MPa.
    pub mu_jt: f64,
    /// Isobaric cubic expansion coefficient (1/v)(dv/dT)_p, 1/K.
    pub alpha_v: f64,
    /// Isothermal compressibility -(1/v)(dv/dp)_T, 1/MPa.
    pub kappa_t: f64,
    /// Compressibility factor Z = p v / (R T), dimensionless (R of the formulation in use).
    pub z: f64,
}

/// Derivatives of the dimensionless Gibbs free energy gamma(pi, tau) = g / (R T),
/// pi = p / p*, tau = T* / T, as the IF97 release writes them (Table 4 of R7-97 and its siblings).
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct GibbsDerivs {
    /// gamma
    pub g: f64,
    /// d gamma / d pi
    pub g_p: f64,
    /// d2 gamma / d pi2
    pub g_pp: f64,
    /// d gamma / d tau
    pub g_t: f64,
    /// d2 gamma / d tau2
    pub g_tt: f64,
    /// d2 gamma / d pi d tau
    pub g_pt: f64,
}

/// Derivatives of the dimensionless Helmholtz free energy phi(delta, tau) = f / (R T),
/// delta = rho / rho*, tau = T* / T (IF97 region 3, Table 31; IAPWS-95, Table 3).
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct HelmholtzDerivs {
    /// phi
    pub f: f64,
    /// d phi / d delta
    pub f_d: f64,
    /// d2 phi / d delta2
    pub f_dd: f64,
    /// d phi / d tau
    pub f_t: f64,
    /// d2 phi / d tau2
    pub f_tt: f64,
    /// d2 phi / d delta d tau
    pub f_dt: f64,
}

/// pi, tau, R T and the first-order properties v, u, h, s from gamma and its first derivatives
/// (R7-97(2012) Tables 3 and 12); shared by [`Props::from_gibbs`] and
/// [`Props::from_gibbs_first`], so the two agree bit for bit by construction.
#[inline(always)]
#[allow(clippy::type_complexity)]
fn gibbs_first_order(
    p: f64,
    t: f64,
    p_star: f64,
    t_star: f64,
    r: f64,
    d: &GibbsDerivs,
) -> (f64, f64, f64, f64, f64, f64, f64) {
    let pi = p / p_star;
    let tau = t_star / t;
    let rt = r * t; // kJ/kg
                    // v = (R T / p) pi gamma_pi; R T in kJ/kg = kPa m3/kg, p in MPa -> factor 1e-3.
    let v = rt / p * pi * d.g_p * 1e-3;
    let h = rt * tau * d.g_t;
    let u = rt * (tau * d.g_t - pi * d.g_p);
    let s = r * (tau * d.g_t - d.g);
    (pi, tau, rt, v, u, h, s)
}

impl Props {
    /// Properties from Gibbs derivatives at (p, T). `p_star` in MPa and `t_star` in K are the
    /// equation's reducing values, `r` the specific gas constant in kJ/(kg K).
    /// Relations: IAPWS R7-97(2012), Table 3 (region 1) and Table 12 (region 2).
    pub fn from_gibbs(p: f64, t: f64, p_star: f64, t_star: f64, r: f64, d: &GibbsDerivs) -> Props {
        let (pi, tau, rt, v, u, h, s) = gibbs_first_order(p, t, p_star, t_star, r, d);
        let cp = -r * tau * tau * d.g_tt;
        let a = d.g_p - tau * d.g_pt;
        let cv = r * (-tau * tau * d.g_tt + a * a / d.g_pp);
        // w^2 = R T * 1e3 * g_p^2 / (a^2 / (tau^2 g_tt) - g_pp)
        let w2 = rt * 1e3 * d.g_p * d.g_p / (a * a / (tau * tau * d.g_tt) - d.g_pp);
        let w = w2.max(0.0).sqrt();
        let alpha_v = (1.0 - tau * d.g_pt / d.g_p) / t;
        let kappa_t = -pi * d.g_pp / d.g_p / p;
        Props::finish(p, t, v, u, h, s, cp, cv, w, alpha_v, kappa_t, r)
    }

    /// The first-order properties from gamma and its first derivatives: p, T, v, rho, u, h, s
    /// and z, by the expressions of [`Props::from_gibbs`] (so identical to its results bit for
    /// bit); cp, cv, w, kappa, mu_jt, alpha_v and kappa_t, which need second derivatives, are NaN.
    /// For bulk work that asks only for first-order properties.
    pub fn from_gibbs_first(
        p: f64,
        t: f64,
        p_star: f64,
        t_star: f64,
        r: f64,
        d: &GibbsDerivs,
    ) -> Props {
        let (_, _, _, v, u, h, s) = gibbs_first_order(p, t, p_star, t_star, r, d);
        let nan = f64::NAN;
        Props::finish(p, t, v, u, h, s, nan, nan, nan, nan, nan, r)
    }

    /// Properties from Helmholtz derivatives at (rho, T). `rho_star` in kg/m3 and `t_star` in K are
    /// the equation's reducing values, `r` the specific gas constant in kJ/(kg K).
    /// Relations: IAPWS R7-97(2012), Table 31 (region 3); IAPWS R6-95(2018), Table 3.
    pub fn from_helmholtz(
        rho: f64,
        t: f64,
        rho_star: f64,
        t_star: f64,
        r: f64,
        d: &HelmholtzDerivs,
    ) -> Props {
        let delta = rho / rho_star;
        let tau = t_star / t;
        let rt = r * t;
        // p = rho R T delta phi_delta; rho R T in kPa -> MPa factor 1e-3.
        let p = rho * rt * delta * d.f_d * 1e-3;
        let u = rt * tau * d.f_t;
        let h = rt * (tau * d.f_t + delta * d.f_d);
        let s = r * (tau * d.f_t - d.f);
        let cv = -r * tau * tau * d.f_tt;
        let b = delta * d.f_d - delta * tau * d.f_dt;
        let c = 2.0 * delta * d.f_d + delta * delta * d.f_dd;
        let cp = r * (-tau * tau * d.f_tt + b * b / c);
        let w2 = rt * 1e3 * (c - b * b / (tau * tau * d.f_tt));
        let w = w2.max(0.0).sqrt();
        // (dp/drho)_T = R T (2 delta phi_d + delta^2 phi_dd) [kJ/kg -> MPa m3/kg: 1e-3]
        let dp_drho = rt * c * 1e-3;
        // (dp/dT)_rho = rho R (delta phi_d - delta tau phi_dt) * 1e-3
        let dp_dt = rho * r * b * 1e-3;
        let kappa_t = 1.0 / (rho * dp_drho);
        let alpha_v = dp_dt * kappa_t;
        Props::finish(p, t, 1.0 / rho, u, h, s, cp, cv, w, alpha_v, kappa_t, r)
    }

    #[allow(clippy::too_many_arguments)]
    fn finish(
        p: f64,
        t: f64,
        v: f64,
        u: f64,
        h: f64,
        s: f64,
        cp: f64,
        cv: f64,
        w: f64,
        alpha_v: f64,
        kappa_t: f64,
        r: f64,
    ) -> Props {
        // p v in MPa m3/kg = 1e3 kJ/kg.
        let pv = p * v * 1e3;
        let kappa = w * w / (p * v * 1e6);
        // (dT/dp)_h = v (T alpha_v - 1) / cp, with v in m3/kg, cp in kJ/(kg K): m3/kg / (kJ/(kg K))
        // = K m3/kJ = K / kPa -> K/MPa factor 1e3.
        let mu_jt = v * (t * alpha_v - 1.0) / cp * 1e3;
        let z = pv / (r * t);
        Props {
            p,
            t,
            v,
            rho: 1.0 / v,
            u,
            h,
            s,
            cp,
            cv,
            w,
            kappa,
            mu_jt,
            alpha_v,
            kappa_t,
            z,
        }
    }
}
