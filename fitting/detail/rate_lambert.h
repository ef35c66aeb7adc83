// The integrated Michaelis–Menten equation through the Lambert W function
// (Schnell & Mendoza 1997), written so that automatic differentiation works:
//
//     S(t) = Km · W0( (S0/Km) · exp((S0 − Vmax·t)/Km) ).
//
// The argument of W0 overflows a double when S0 ≫ Km, so W0 is evaluated as a
// function of the logarithm of its argument: w = W0(e^y) solves w + ln w = y.
#pragma once

#include <cmath>

#include <boost/math/special_functions/lambert_w.hpp>

namespace ratewell::detail {

// W0(e^y) for a double y. Uses Boost.Math's lambert_w0 where e^y is a normal
// double, Newton steps on w + ln w = y above, and W0(x) ≈ x below.
inline double LambertW0OfExp(double y) {
  if (y < -700.0) return std::exp(y);  // W0(x) = x − x² + …, x < 1e-304
  if (y < 700.0) return boost::math::lambert_w0(std::exp(y));
  double w = y - std::log(y);
  for (int k = 0; k < 6; ++k) w -= (w + std::log(w) - y) * w / (1.0 + w);
  return w;
}

// The same for any scalar type T with exp and log found by ADL (double or a
// ceres::Jet): the value comes from the double version, then one Newton step
// in T carries the derivative dw/dy = w / (1 + w) exactly. y_value is the
// scalar part of y.
template <typename T>
T LambertW0OfExp(const T& y, double y_value) {
  using std::exp;
  using std::log;
  if (y_value < -700.0) return exp(y);
  const double w = LambertW0OfExp(y_value);
  return T(w) - (T(w + std::log(w)) - y) * (w / (1.0 + w));
}

// Substrate left at time t (min) for S0 (µM), initial rate v0 = Vmax·S0/(Km + S0)
// (µM/min) and elasticity e = Km/(Km + S0) ∈ (0, 1):
//   Km = e·S0/(1 − e),  Vmax = v0/(1 − e),
//   y  = ln((1 − e)/e) + (1 − e)/e − v0·t/(e·S0),
//   S  = S0 · e/(1 − e) · W0(e^y).
// At e → 1 this tends to S0·exp(−v0 t/S0) (first order), at e → 0 to
// S0 − v0·t (zero order).
template <typename T>
T SubstrateRemaining(const T& t, const T& s0, const T& v0, const T& e, double y_value) {
  using std::log;
  const T ratio = (T(1.0) - e) / e;
  const T y = log(ratio) + ratio - v0 * t / (e * s0);
  return s0 / ratio * LambertW0OfExp(y, y_value);
}

// The scalar part of y above, for doubles.
inline double SubstrateExponent(double t, double s0, double v0, double e) {
  const double ratio = (1.0 - e) / e;
  return std::log(ratio) + ratio - v0 * t / (e * s0);
}

}  // namespace ratewell::detail
