// The rate laws of fitting/kinetic_models.h as templates, usable with double
// and with ceres::Jet (automatic differentiation). Each law reads its
// parameters in DescribeModel order from p and returns v(S, I). No Ceres
// include here: Jet maths is found by argument-dependent lookup.
#pragma once

#include <cmath>

#include "fitting/kinetic_models.h"

namespace ratewell::detail {

// 1/(1 + eᶻ) without overflow: for z > 0 it is e⁻ᶻ/(1 + e⁻ᶻ), so neither
// the value nor (for a Jet) the derivative meets ∞/∞.
template <typename T>
T LogisticOfMinus(const T& z) {
  using std::exp;
  if (z > 0.0) {
    const T w = exp(-z);
    return w / (1.0 + w);
  }
  return 1.0 / (1.0 + exp(z));
}

struct MichaelisMentenLaw {
  static constexpr KineticModel kModel = KineticModel::kMichaelisMenten;
  static constexpr int kNumParameters = 2;  // Vmax, Km
  template <typename T>
  static T Rate(const T* p, double s, double /*i*/) {
    return p[0] * s / (p[1] + s);
  }
};

struct SubstrateInhibitionLaw {
  static constexpr KineticModel kModel = KineticModel::kSubstrateInhibition;
  static constexpr int kNumParameters = 3;  // Vmax, Km, Ksi
  template <typename T>
  static T Rate(const T* p, double s, double /*i*/) {
    return p[0] * s / (p[1] + s + s * s / p[2]);
  }
};

struct HillLaw {
  static constexpr KineticModel kModel = KineticModel::kHill;
  static constexpr int kNumParameters = 3;  // Vmax, Khalf, h
  template <typename T>
  static T Rate(const T* p, double s, double /*i*/) {
    using std::log;
    if (!(s > 0.0)) return p[0] * 0.0;
    // Sʰ/(Kʰ + Sʰ) = 1/(1 + (K/S)ʰ), with (K/S)ʰ = exp(h·(ln K − ln S)).
    return p[0] * LogisticOfMinus(p[2] * (log(p[1]) - std::log(s)));
  }
};

struct CompetitiveLaw {
  static constexpr KineticModel kModel = KineticModel::kCompetitive;
  static constexpr int kNumParameters = 3;  // Vmax, Km, Ki
  template <typename T>
  static T Rate(const T* p, double s, double i) {
    return p[0] * s / (p[1] * (1.0 + i / p[2]) + s);
  }
};

struct UncompetitiveLaw {
  static constexpr KineticModel kModel = KineticModel::kUncompetitive;
  static constexpr int kNumParameters = 3;  // Vmax, Km, Ki
  template <typename T>
  static T Rate(const T* p, double s, double i) {
    return p[0] * s / (p[1] + s * (1.0 + i / p[2]));
  }
};

struct NoncompetitiveLaw {
  static constexpr KineticModel kModel = KineticModel::kNoncompetitive;
  static constexpr int kNumParameters = 3;  // Vmax, Km, Ki
  template <typename T>
  static T Rate(const T* p, double s, double i) {
    return p[0] * s / ((p[1] + s) * (1.0 + i / p[2]));
  }
};

struct MixedLaw {
  static constexpr KineticModel kModel = KineticModel::kMixed;
  static constexpr int kNumParameters = 4;  // Vmax, Km, Ki, alpha
  template <typename T>
  static T Rate(const T* p, double s, double i) {
    return p[0] * s / (p[1] * (1.0 + i / p[2]) + s * (1.0 + i / (p[3] * p[2])));
  }
};

struct MorrisonLaw {
  static constexpr KineticModel kModel = KineticModel::kMorrison;
  static constexpr int kNumParameters = 3;  // v0, Kiapp, E
  template <typename T>
  static T Rate(const T* p, double /*s*/, double i) {
    using std::sqrt;
    if (!(i > 0.0)) return p[0] * 1.0;
    // 1 − ((b − √(b² − 4EI))/(2E)) = 1 − 2I/(b + √(b² − 4EI)), b = E + I + Kiapp.
    const T b = p[2] + i + p[1];
    return p[0] * (1.0 - 2.0 * i / (b + sqrt(b * b - 4.0 * i * p[2])));
  }
};

struct FourParameterLogisticLaw {
  static constexpr KineticModel kModel = KineticModel::kFourParameterLogistic;
  static constexpr int kNumParameters = 4;  // top, bottom, IC50, h
  template <typename T>
  static T Rate(const T* p, double /*s*/, double i) {
    using std::log;
    if (!(i > 0.0)) return p[0] * 1.0;
    // (I/IC50)ʰ = exp(h·(ln I − ln IC50)).
    return p[1] + (p[0] - p[1]) * LogisticOfMinus(p[3] * (std::log(i) - log(p[2])));
  }
};

struct FourParameterLogisticLog10Law {
  static constexpr KineticModel kModel = KineticModel::kFourParameterLogisticLog10;
  static constexpr int kNumParameters = 4;  // top, bottom, log10_IC50, h
  template <typename T>
  static T Rate(const T* p, double /*s*/, double i) {
    if (!(i > 0.0)) return p[0] * 1.0;
    // 10^(h·(log10 I − log10_IC50)) = exp(ln 10 · h·(log10 I − log10_IC50)).
    constexpr double kLn10 = 2.302585092994045684;
    return p[1] + (p[0] - p[1]) * LogisticOfMinus(kLn10 * p[3] * (std::log10(i) - p[2]));
  }
};

// Calls fn(Law{}) for the law of `model`; returns what fn returns.
template <typename Fn>
auto DispatchRateLaw(KineticModel model, Fn&& fn) {
  switch (model) {
    case KineticModel::kMichaelisMenten: return fn(MichaelisMentenLaw{});
    case KineticModel::kSubstrateInhibition: return fn(SubstrateInhibitionLaw{});
    case KineticModel::kHill: return fn(HillLaw{});
    case KineticModel::kCompetitive: return fn(CompetitiveLaw{});
    case KineticModel::kUncompetitive: return fn(UncompetitiveLaw{});
    case KineticModel::kNoncompetitive: return fn(NoncompetitiveLaw{});
    case KineticModel::kMixed: return fn(MixedLaw{});
    case KineticModel::kMorrison: return fn(MorrisonLaw{});
    case KineticModel::kFourParameterLogistic: return fn(FourParameterLogisticLaw{});
    case KineticModel::kFourParameterLogisticLog10: return fn(FourParameterLogisticLog10Law{});
  }
  return fn(MichaelisMentenLaw{});
}

}  // namespace ratewell::detail
