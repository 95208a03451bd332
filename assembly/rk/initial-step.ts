// The first step of a stance, shared by every model kind's stance driver.

// First stance step: a fraction of the fastest time scale, shrunk with the
// tolerance as h ~ rtol^(1/5) for a 5th-order method.
export function initialStep(mass: f64, k: f64, speed: f64, leg: f64, rtol: f64): f64 {
  const omega = Math.sqrt(k / mass) + speed / leg;
  let f = 2.0 * Math.pow(rtol, 0.2);
  if (f > 0.5) f = 0.5;
  return f / omega;
}
