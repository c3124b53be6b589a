//! Dynamic viscosity of ordinary water, IAPWS R12-08: mu = mu* mu_bar_0(T) mu_bar_1(T, rho)
//! mu_bar_2(T, rho), Eqs. (10)-(12) (Tables 1, 2) and the critical enhancement Eqs. (13)-(21)
//! (Table 3).
//!
//! Units: rho kg/m3, T K in; viscosity Pa s out. (The release's check values are in µPa s.)
//!
//! Invariant: the full correlation takes zeta = (d rho_bar / d p_bar)_T from IAPWS-95 at T and at
//! T_R = 1.5 T_c; the industrial variant sets mu_bar_2 = 1, as the release allows for industrial
//! use (it matters only within about 1 % of the critical point). No allocation, no iteration.

use crate::water::iapws95;
use crate::water::tables::viscosity_2008 as tab;

/// mu_bar_0(T_bar), the dilute-gas part, Eq. (11) with Table 1.
pub fn mu0(t_bar: f64) -> f64 {
    let inv = 1.0 / t_bar;
    let mut sum = 0.0;
    let mut pw = 1.0;
    // TERMS_MU0 holds i = 0..3 in order.
    for term in &tab::TERMS_MU0 {
        sum += term.n * pw;
        pw *= inv;
    }
    100.0 * t_bar.sqrt() / sum
}

/// mu_bar_1(T_bar, rho_bar), the residual part, Eq. (12) with Table 2.
pub fn mu1(t_bar: f64, rho_bar: f64) -> f64 {
    let x = 1.0 / t_bar - 1.0;
    let y = rho_bar - 1.0;
    let mut xp = [1.0f64; 6];
    let mut yp = [1.0f64; 7];
    for i in 1..6 {
        xp[i] = xp[i - 1] * x;
    }
    for j in 1..7 {
        yp[j] = yp[j - 1] * y;
    }
    let sum: f64 = tab::TERMS_MU1
        .iter()
        .map(|c| c.n * xp[c.i as usize] * yp[c.j as usize])
        .sum();
    (rho_bar * sum).exp()
}

/// zeta = (d rho_bar / d p_bar)_T_bar from IAPWS-95 at (rho kg/m3, T K), with the reducing values
/// of R12-08 (rho* = 322 kg/m3, p* = 22.064 MPa). Shared with the thermal conductivity.
pub fn zeta_95(rho: f64, t: f64) -> f64 {
    iapws95::drho_dp_t(rho, t) * tab::P_STAR / tab::RHO_STAR
}

/// Correlation length xi in nm from Delta_chi_bar = rho_bar [zeta(T) - zeta(T_R) T_R / T]
/// (negative values set to 0), Eqs. (20)-(21). Shared with R15-11, which uses the same form.
pub fn correlation_length(rho_bar: f64, t_bar: f64, zeta_t: f64, zeta_r: f64) -> f64 {
    let dchi = (rho_bar * (zeta_t - zeta_r * tab::T_BAR_R / t_bar)).max(0.0);
    tab::XI0 * (dchi / tab::GAMMA0).powf(tab::NU / tab::GAMMA)
}

/// mu_bar_2 from the correlation length xi in nm, Eqs. (13)-(19) (critical enhancement).
pub fn mu2_from_xi(xi: f64) -> f64 {
    let qc = 1.0 / tab::QC_INVERSE;
    let qd = 1.0 / tab::QD_INVERSE;
    let y = if xi <= tab::XI_SWITCH {
        // Eq. (15): the series form for small xi (continuous with the general form).
        let qcx = qc * xi;
        let qdx = qd * xi;
        let qdx2 = qdx * qdx;
        0.2 * qcx * qdx2 * qdx2 * qdx * (1.0 - qcx + qcx * qcx - 765.0 / 504.0 * qdx2)
    } else {
        let qcx = qc * xi;
        let qdx = qd * xi;
        let psi_d = (1.0 / (1.0 + qdx * qdx).sqrt()).acos();
        let w = ((qcx - 1.0) / (qcx + 1.0)).abs().sqrt() * (0.5 * psi_d).tan();
        let l = if qcx > 1.0 {
            ((1.0 + w) / (1.0 - w)).ln()
        } else {
            2.0 * w.abs().atan()
        };
        let qcx2 = qcx * qcx;
        (3.0 * psi_d).sin() / 12.0 - (2.0 * psi_d).sin() / (4.0 * qcx)
            + (1.0 - 1.25 * qcx2) * psi_d.sin() / qcx2
            - ((1.0 - 1.5 * qcx2) * psi_d - (qcx2 - 1.0).abs().powf(1.5) * l) / (qcx2 * qcx)
    };
    (tab::X_MU * y).exp()
}

/// mu_bar_2 at (rho kg/m3, T K) with zeta from IAPWS-95 (the full correlation).
pub fn mu2(rho: f64, t: f64) -> f64 {
    if rho <= 0.0 {
        return 1.0; // dilute limit: no enhancement
    }
    let t_bar = t / tab::T_STAR;
    let rho_bar = rho / tab::RHO_STAR;
    let zeta_t = zeta_95(rho, t);
    let zeta_r = zeta_95(rho, tab::T_BAR_R * tab::T_STAR);
    mu2_from_xi(correlation_length(rho_bar, t_bar, zeta_t, zeta_r))
}

/// Viscosity in Pa s at (rho kg/m3, T K), the full IAPWS R12-08 correlation including the
/// critical enhancement (zeta from IAPWS-95). Requires rho > 0, T > 0.
pub fn viscosity(rho: f64, t: f64) -> f64 {
    viscosity_industrial(rho, t) * mu2(rho, t)
}

/// Viscosity in Pa s at (rho kg/m3, T K) with mu_bar_2 = 1: the release's recommendation for
/// industrial use, e.g. with densities from IAPWS-IF97. Accepts rho >= 0.
pub fn viscosity_industrial(rho: f64, t: f64) -> f64 {
    let t_bar = t / tab::T_STAR;
    let rho_bar = rho / tab::RHO_STAR;
    tab::MU_STAR * mu0(t_bar) * mu1(t_bar, rho_bar)
}
