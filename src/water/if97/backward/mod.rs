//! IAPWS-IF97 backward equations: R7-97(2012) T(p,h), T(p,s) for regions 1 and 2; SR2-01 p(h,s)
//! regions 1 and 2; SR3-03 region 3 T, v of (p,h) and (p,s), p3sat(h), p3sat(s); SR4-04 p3(h,s),
//! Tsat(h,s) and the (h,s) boundaries; SR5-05 v(p,T) for region 3 with all subregions.
