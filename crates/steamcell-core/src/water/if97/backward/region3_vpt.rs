//! Region 3 backward equation v(p,T) of IAPWS SR5-05(2016): the 12 subregion boundaries
//! T3ab(p) ... T3wx(p), the choice of subregion 3a..3t and of the auxiliary near-critical
//! subregions 3u..3z, and the 26 subregion equations.
//!
//! Units: p MPa, T K, v m3/kg. Invariant: `subregion_pt` implements the subregion map of the
//! release (pressure bands p_low < p <= p_high, boundary temperature belongs to the
//! lower-temperature subregion) for (p,T) inside region 3; outside region 3 it still returns a
//! letter (the nearest band), so callers check the region first. `v_pt` is a raw evaluation.

use super::{sum_i, Series};
use crate::water::if97::region4 as sat;
use crate::water::tables as tb;
use crate::water::tables::sr5_05_subregion_map as map;

/// T3ab(p) in K: theta = sum n (ln pi)^I.
pub fn t_3ab(p: f64) -> f64 {
    sum_i(&tb::sr5_05_t3ab::TERMS, (p / tb::sr5_05_t3ab::P_STAR).ln()) * tb::sr5_05_t3ab::T_STAR
}

/// T3cd(p) in K: theta = sum n pi^I.
pub fn t_3cd(p: f64) -> f64 {
    sum_i(&tb::sr5_05_t3cd::TERMS, p / tb::sr5_05_t3cd::P_STAR) * tb::sr5_05_t3cd::T_STAR
}

/// T3ef(p) in K: theta = 3.727888004 (pi - 22.064) + 647.096 (linear).
pub fn t_3ef(p: f64) -> f64 {
    use tb::sr5_05_t3ef as m;
    (m::TERMS[0] * (p / m::P_STAR - m::PI_C) + m::THETA_C) * m::T_STAR
}

/// T3gh(p) in K: theta = sum n pi^I.
pub fn t_3gh(p: f64) -> f64 {
    sum_i(&tb::sr5_05_t3gh::TERMS, p / tb::sr5_05_t3gh::P_STAR) * tb::sr5_05_t3gh::T_STAR
}

/// T3ij(p) in K: theta = sum n pi^I.
pub fn t_3ij(p: f64) -> f64 {
    sum_i(&tb::sr5_05_t3ij::TERMS, p / tb::sr5_05_t3ij::P_STAR) * tb::sr5_05_t3ij::T_STAR
}

/// T3jk(p) in K: theta = sum n pi^I.
pub fn t_3jk(p: f64) -> f64 {
    sum_i(&tb::sr5_05_t3jk::TERMS, p / tb::sr5_05_t3jk::P_STAR) * tb::sr5_05_t3jk::T_STAR
}

/// T3mn(p) in K: theta = sum n pi^I.
pub fn t_3mn(p: f64) -> f64 {
    sum_i(&tb::sr5_05_t3mn::TERMS, p / tb::sr5_05_t3mn::P_STAR) * tb::sr5_05_t3mn::T_STAR
}

/// T3op(p) in K: theta = sum n (ln pi)^I.
pub fn t_3op(p: f64) -> f64 {
    sum_i(&tb::sr5_05_t3op::TERMS, (p / tb::sr5_05_t3op::P_STAR).ln()) * tb::sr5_05_t3op::T_STAR
}

/// T3qu(p) in K: theta = sum n pi^I.
pub fn t_3qu(p: f64) -> f64 {
    sum_i(&tb::sr5_05_t3qu::TERMS, p / tb::sr5_05_t3qu::P_STAR) * tb::sr5_05_t3qu::T_STAR
}

/// T3rx(p) in K: theta = sum n pi^I.
pub fn t_3rx(p: f64) -> f64 {
    sum_i(&tb::sr5_05_t3rx::TERMS, p / tb::sr5_05_t3rx::P_STAR) * tb::sr5_05_t3rx::T_STAR
}

/// T3uv(p) in K: theta = sum n pi^I.
pub fn t_3uv(p: f64) -> f64 {
    sum_i(&tb::sr5_05_t3uv::TERMS, p / tb::sr5_05_t3uv::P_STAR) * tb::sr5_05_t3uv::T_STAR
}

/// T3wx(p) in K: theta = sum n (ln pi)^I.
pub fn t_3wx(p: f64) -> f64 {
    sum_i(&tb::sr5_05_t3wx::TERMS, (p / tb::sr5_05_t3wx::P_STAR).ln()) * tb::sr5_05_t3wx::T_STAR
}

/// Subregion letter 'a'..'z' of a region-3 state (p,T) (SR5-05(2016) subregion map).
pub fn subregion_pt(p: f64, t: f64) -> char {
    if p > 40.0 {
        if t <= t_3ab(p) {
            'a'
        } else {
            'b'
        }
    } else if p > 25.0 {
        if t <= t_3cd(p) {
            'c'
        } else if t <= t_3ab(p) {
            'd'
        } else if t <= t_3ef(p) {
            'e'
        } else {
            'f'
        }
    } else if p > 23.5 {
        if t <= t_3cd(p) {
            'c'
        } else if t <= t_3gh(p) {
            'g'
        } else if t <= t_3ef(p) {
            'h'
        } else if t <= t_3ij(p) {
            'i'
        } else if t <= t_3jk(p) {
            'j'
        } else {
            'k'
        }
    } else if p > 23.0 {
        if t <= t_3cd(p) {
            'c'
        } else if t <= t_3gh(p) {
            'l'
        } else if t <= t_3ef(p) {
            'h'
        } else if t <= t_3ij(p) {
            'i'
        } else if t <= t_3jk(p) {
            'j'
        } else {
            'k'
        }
    } else if p > 22.5 {
        if t <= t_3cd(p) {
            'c'
        } else if t <= t_3gh(p) {
            'l'
        } else if t <= t_3mn(p) {
            'm'
        } else if t <= t_3ef(p) {
            'n'
        } else if t <= t_3op(p) {
            'o'
        } else if t <= t_3ij(p) {
            'p'
        } else if t <= t_3jk(p) {
            'j'
        } else {
            'k'
        }
    } else if p > map::P_SAT_643_15K {
        if t <= t_3cd(p) {
            'c'
        } else if t <= t_3qu(p) {
            'q'
        } else if t <= t_3rx(p) {
            near_critical(p, t)
        } else if t <= t_3jk(p) {
            'r'
        } else {
            'k'
        }
    } else if p > 20.5 {
        if t <= t_3cd(p) {
            'c'
        } else if t <= sat::tsat(p) {
            's'
        } else if t <= t_3jk(p) {
            'r'
        } else {
            'k'
        }
    } else if p > map::P_3CD {
        if t <= t_3cd(p) {
            'c'
        } else if t <= sat::tsat(p) {
            's'
        } else {
            't'
        }
    } else if t <= sat::tsat(p) {
        'c'
    } else {
        't'
    }
}

/// Auxiliary subregions 3u..3z for p_s(643.15 K) < p <= 22.5 MPa, T3qu(p) < T <= T3rx(p).
fn near_critical(p: f64, t: f64) -> char {
    if p > 22.11 {
        if t <= t_3uv(p) {
            'u'
        } else if t <= t_3ef(p) {
            'v'
        } else if t <= t_3wx(p) {
            'w'
        } else {
            'x'
        }
    } else if p > 22.064 {
        if t <= t_3uv(p) {
            'u'
        } else if t <= t_3ef(p) {
            'y'
        } else if t <= t_3wx(p) {
            'z'
        } else {
            'x'
        }
    } else if t <= sat::tsat(p) {
        if p > map::P_3UV_SAT && t > t_3uv(p) {
            'y'
        } else {
            'u'
        }
    } else if p > map::P_3WX_SAT && t <= t_3wx(p) {
        'z'
    } else {
        'x'
    }
}

/// `x^c` for the exponents c, d, e that occur in SR5-05 (1, 1/2, 1/4, 4), without `powf`.
#[inline]
fn pow_small(x: f64, c: f64) -> f64 {
    if c == 1.0 {
        x
    } else if c == 0.5 {
        x.sqrt()
    } else if c == 0.25 {
        x.sqrt().sqrt()
    } else if c == 4.0 {
        let x2 = x * x;
        x2 * x2
    } else {
        x.powf(c)
    }
}

/// One subregion equation: omega = [sum n ((pi - a)^c)^I ((theta - b)^d)^J]^e.
macro_rules! vpt_power_form {
    ($fname:ident, $m:ident) => {
        fn $fname(p: f64, t: f64) -> f64 {
            use tb::$m as m;
            static S: Series = Series::new(&m::TERMS);
            let x = pow_small(p / m::P_STAR - m::A, m::C);
            let y = pow_small(t / m::T_STAR - m::B, m::D);
            pow_small(S.eval(x, y), m::E) * m::V_STAR
        }
    };
}

vpt_power_form!(v3a, sr5_05_region3a_vpt);
vpt_power_form!(v3b, sr5_05_region3b_vpt);
vpt_power_form!(v3c, sr5_05_region3c_vpt);
vpt_power_form!(v3d, sr5_05_region3d_vpt);
vpt_power_form!(v3e, sr5_05_region3e_vpt);
vpt_power_form!(v3f, sr5_05_region3f_vpt);
vpt_power_form!(v3g, sr5_05_region3g_vpt);
vpt_power_form!(v3h, sr5_05_region3h_vpt);
vpt_power_form!(v3i, sr5_05_region3i_vpt);
vpt_power_form!(v3j, sr5_05_region3j_vpt);
vpt_power_form!(v3k, sr5_05_region3k_vpt);
vpt_power_form!(v3l, sr5_05_region3l_vpt);
vpt_power_form!(v3m, sr5_05_region3m_vpt);
vpt_power_form!(v3o, sr5_05_region3o_vpt);
vpt_power_form!(v3p, sr5_05_region3p_vpt);
vpt_power_form!(v3q, sr5_05_region3q_vpt);
vpt_power_form!(v3r, sr5_05_region3r_vpt);
vpt_power_form!(v3s, sr5_05_region3s_vpt);
vpt_power_form!(v3t, sr5_05_region3t_vpt);
vpt_power_form!(v3u, sr5_05_region3u_vpt);
vpt_power_form!(v3v, sr5_05_region3v_vpt);
vpt_power_form!(v3w, sr5_05_region3w_vpt);
vpt_power_form!(v3x, sr5_05_region3x_vpt);
vpt_power_form!(v3y, sr5_05_region3y_vpt);
vpt_power_form!(v3z, sr5_05_region3z_vpt);

/// Subregion 3n: omega = exp[sum n (pi - a)^I (theta - b)^J].
fn v3n(p: f64, t: f64) -> f64 {
    use tb::sr5_05_region3n_vpt as m;
    static S: Series = Series::new(&m::TERMS);
    S.eval(p / m::P_STAR - m::A, t / m::T_STAR - m::B).exp() * m::V_STAR
}

/// v(p,T) in m3/kg of a given subregion letter 'a'..'z'; NaN for any other letter.
pub fn v_pt_sub(sub: char, p: f64, t: f64) -> f64 {
    match sub {
        'a' => v3a(p, t),
        'b' => v3b(p, t),
        'c' => v3c(p, t),
        'd' => v3d(p, t),
        'e' => v3e(p, t),
        'f' => v3f(p, t),
        'g' => v3g(p, t),
        'h' => v3h(p, t),
        'i' => v3i(p, t),
        'j' => v3j(p, t),
        'k' => v3k(p, t),
        'l' => v3l(p, t),
        'm' => v3m(p, t),
        'n' => v3n(p, t),
        'o' => v3o(p, t),
        'p' => v3p(p, t),
        'q' => v3q(p, t),
        'r' => v3r(p, t),
        's' => v3s(p, t),
        't' => v3t(p, t),
        'u' => v3u(p, t),
        'v' => v3v(p, t),
        'w' => v3w(p, t),
        'x' => v3x(p, t),
        'y' => v3y(p, t),
        'z' => v3z(p, t),
        _ => f64::NAN,
    }
}

/// v(p,T) in m3/kg of region 3 with the subregion chosen by `subregion_pt`.
pub fn v_pt(p: f64, t: f64) -> f64 {
    v_pt_sub(subregion_pt(p, t), p, t)
}
