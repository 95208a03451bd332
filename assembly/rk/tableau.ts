// The Dormand–Prince 5(4) tableau and Shampine's dense-output matrix as exact
// rationals, for steppers of other dimensions than the stance's (dopri-n.ts).
//
// Sources as in dopri5.ts: J.R. Dormand, P.J. Prince, J. Comput. Appl. Math.
// 6(1):19–26, 1980 (RK5(4)7M); Hairer, Nørsett, Wanner, Solving ODEs I, 2nd
// ed., table 5.2; L.F. Shampine, Math. Comp. 46(173):135–150, 1986 (the
// interpolant in scipy.integrate.RK45's power-series form). Each constant is
// the same rational literal as in dopri5.ts, so it folds to the same double.

export const C2: f64 = 1.0 / 5.0;
export const C3: f64 = 3.0 / 10.0;
export const C4: f64 = 4.0 / 5.0;
export const C5: f64 = 8.0 / 9.0;

export const A21: f64 = 1.0 / 5.0;
export const A31: f64 = 3.0 / 40.0;
export const A32: f64 = 9.0 / 40.0;
export const A41: f64 = 44.0 / 45.0;
export const A42: f64 = -56.0 / 15.0;
export const A43: f64 = 32.0 / 9.0;
export const A51: f64 = 19372.0 / 6561.0;
export const A52: f64 = -25360.0 / 2187.0;
export const A53: f64 = 64448.0 / 6561.0;
export const A54: f64 = -212.0 / 729.0;
export const A61: f64 = 9017.0 / 3168.0;
export const A62: f64 = -355.0 / 33.0;
export const A63: f64 = 46732.0 / 5247.0;
export const A64: f64 = 49.0 / 176.0;
export const A65: f64 = -5103.0 / 18656.0;
export const B1: f64 = 35.0 / 384.0;
export const B3: f64 = 500.0 / 1113.0;
export const B4: f64 = 125.0 / 192.0;
export const B5: f64 = -2187.0 / 6784.0;
export const B6: f64 = 11.0 / 84.0;
export const E1: f64 = 71.0 / 57600.0;
export const E3: f64 = -71.0 / 16695.0;
export const E4: f64 = 71.0 / 1920.0;
export const E5: f64 = -17253.0 / 339200.0;
export const E6: f64 = 22.0 / 525.0;
export const E7: f64 = -1.0 / 40.0;

export const P11: f64 = 1.0;
export const P12: f64 = -8048581381.0 / 2820520608.0;
export const P13: f64 = 8663915743.0 / 2820520608.0;
export const P14: f64 = -12715105075.0 / 11282082432.0;
export const P32: f64 = 131558114200.0 / 32700410799.0;
export const P33: f64 = -68118460800.0 / 10900136933.0;
export const P34: f64 = 87487479700.0 / 32700410799.0;
export const P42: f64 = -1754552775.0 / 470086768.0;
export const P43: f64 = 14199869525.0 / 1410260304.0;
export const P44: f64 = -10690763975.0 / 1880347072.0;
export const P52: f64 = 127303824393.0 / 49829197408.0;
export const P53: f64 = -318862633887.0 / 49829197408.0;
export const P54: f64 = 701980252875.0 / 199316789632.0;
export const P62: f64 = -282668133.0 / 205662961.0;
export const P63: f64 = 2019193451.0 / 616988883.0;
export const P64: f64 = -1453857185.0 / 822651844.0;
export const P72: f64 = 40617522.0 / 29380423.0;
export const P73: f64 = -110615467.0 / 29380423.0;
export const P74: f64 = 69997945.0 / 29380423.0;
