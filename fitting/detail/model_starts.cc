#include "fitting/detail/model_starts.h"

#include <algorithm>
#include <cmath>
#include <map>
#include <utility>

namespace ratewell::detail {
namespace {

// Mean response at each distinct x (x > 0 only when positive_only), by x.
std::vector<std::pair<double, double>> MeansByX(const std::vector<double>& x,
                                                const std::vector<double>& v, bool positive_only) {
  std::map<double, std::pair<double, int>> sums;
  for (size_t i = 0; i < x.size(); ++i) {
    if (!std::isfinite(x[i]) || !std::isfinite(v[i]) || (positive_only && !(x[i] > 0.0))) continue;
    auto& [sum, count] = sums[x[i]];
    sum += v[i];
    ++count;
  }
  std::vector<std::pair<double, double>> means;
  for (const auto& [xv, sc] : sums) means.emplace_back(xv, sc.first / sc.second);
  return means;
}

double Median(std::vector<double> values) {
  if (values.empty()) return std::nan("");
  std::sort(values.begin(), values.end());
  const size_t n = values.size();
  return n % 2 ? values[n / 2] : 0.5 * (values[n / 2 - 1] + values[n / 2]);
}

double Positive(double value, double fallback) {
  return std::isfinite(value) && value > 0.0 ? value : fallback;
}

// x where the mean response first crosses `level` (interpolated in ln x);
// NaN when it never does.
double CrossingX(const std::vector<std::pair<double, double>>& means, double level) {
  for (size_t k = 1; k < means.size(); ++k) {
    const auto [x0, y0] = means[k - 1];
    const auto [x1, y1] = means[k];
    if ((y0 - level) * (y1 - level) <= 0.0 && y0 != y1) {
      const double f = (level - y0) / (y1 - y0);
      if (x0 > 0.0 && x1 > 0.0) return std::exp(std::log(x0) + f * (std::log(x1) - std::log(x0)));
      return x0 + f * (x1 - x0);
    }
  }
  return std::nan("");
}

// Least-squares line y = a + b·x; false with fewer than 2 distinct x.
bool Line(const std::vector<double>& x, const std::vector<double>& y, double* a, double* b) {
  const size_t n = x.size();
  if (n < 2) return false;
  double mx = 0.0, my = 0.0;
  for (size_t i = 0; i < n; ++i) {
    mx += x[i];
    my += y[i];
  }
  mx /= n;
  my /= n;
  double sxx = 0.0, sxy = 0.0;
  for (size_t i = 0; i < n; ++i) {
    sxx += (x[i] - mx) * (x[i] - mx);
    sxy += (x[i] - mx) * (y[i] - my);
  }
  if (!(sxx > 0.0)) return false;
  *b = sxy / sxx;
  *a = my - *b * mx;
  return std::isfinite(*a) && std::isfinite(*b);
}

double MaxOf(const std::vector<double>& values, double fallback) {
  double best = -HUGE_VAL;
  for (double x : values) {
    if (std::isfinite(x)) best = std::max(best, x);
  }
  return std::isfinite(best) ? best : fallback;
}

// (Vmax, Km) candidates from a saturation curve.
std::vector<std::vector<double>> SaturationStarts(const std::vector<double>& s,
                                                  const std::vector<double>& v) {
  const auto means = MeansByX(s, v, true);
  const double s_max = Positive(means.empty() ? 1.0 : means.back().first, 1.0);
  const double s_mid = means.empty() ? 1.0 : means[means.size() / 2].first;
  double v_max = 0.0;
  for (const auto& m : means) v_max = std::max(v_max, m.second);
  v_max = Positive(v_max, Positive(std::abs(MaxOf(v, 1.0)), 1.0));
  std::vector<std::vector<double>> starts;
  // Read-off: Vmax ≈ the largest mean rate, Km ≈ [S] at half of it.
  const double km_read = Positive(CrossingX(means, 0.5 * v_max), s_max);
  starts.push_back({v_max, km_read});
  // Hanes–Woolf: S/v = Km/Vmax + S/Vmax.
  std::vector<double> x, y;
  for (size_t i = 0; i < s.size(); ++i) {
    if (s[i] > 0.0 && v[i] > 0.0 && std::isfinite(s[i]) && std::isfinite(v[i])) {
      x.push_back(s[i]);
      y.push_back(s[i] / v[i]);
    }
  }
  double a = 0.0, b = 0.0;
  if (Line(x, y, &a, &b) && a > 0.0 && b > 0.0) starts.push_back({1.0 / b, a / b});
  // The top of the range not reached yet: a larger Vmax and Km.
  starts.push_back({2.0 * v_max, Positive(std::max(km_read, s_mid), 1.0) * 2.0});
  return starts;
}

std::vector<std::vector<double>> SubstrateInhibitionStarts(const std::vector<double>& s,
                                                           const std::vector<double>& v) {
  const auto means = MeansByX(s, v, true);
  const double s_max = means.empty() ? 1.0 : Positive(means.back().first, 1.0);
  std::vector<std::vector<double>> starts;
  // A peak inside the range: S_peak = √(Km·Ksi), v_peak = Vmax/(1 + 2√(Km/Ksi)).
  size_t peak = 0;
  for (size_t k = 0; k < means.size(); ++k) {
    if (means[k].second > means[peak].second) peak = k;
  }
  const bool interior = !means.empty() && peak + 1 < means.size() && peak > 0;
  for (const auto& mm : SaturationStarts(s, v)) {
    if (interior) {
      const double s_peak = means[peak].first, v_peak = means[peak].second;
      const double km = std::min(mm[1], 0.5 * s_peak);
      const double ksi = s_peak * s_peak / km;
      starts.push_back({v_peak * (1.0 + 2.0 * std::sqrt(km / ksi)), km, ksi});
    }
    starts.push_back({mm[0], mm[1], 10.0 * s_max});
    starts.push_back({1.5 * mm[0], mm[1], s_max});
  }
  return starts;
}

std::vector<std::vector<double>> HillStarts(const std::vector<double>& s,
                                            const std::vector<double>& v) {
  std::vector<std::vector<double>> starts;
  const auto saturation = SaturationStarts(s, v);
  // Hill plot: ln(v/(Vmax − v)) = h·ln S − h·ln Khalf, with Vmax a little
  // above the largest rate.
  const double v_top = 1.1 * saturation.front()[0];
  std::vector<double> x, y;
  for (size_t i = 0; i < s.size(); ++i) {
    if (s[i] > 0.0 && v[i] > 0.0 && v[i] < v_top) {
      x.push_back(std::log(s[i]));
      y.push_back(std::log(v[i] / (v_top - v[i])));
    }
  }
  double a = 0.0, b = 0.0;
  if (Line(x, y, &a, &b) && b > 0.05 && b < 20.0) starts.push_back({v_top, std::exp(-a / b), b});
  for (const auto& mm : saturation) {
    starts.push_back({mm[0], mm[1], 1.0});
  }
  starts.push_back({saturation.front()[0], saturation.front()[1], 2.0});
  starts.push_back({saturation.front()[0], saturation.front()[1], 0.5});
  return starts;
}

// Per-point Ki of a one-constant mode given Vmax and Km, median of the
// positive ones.
double ModeKi(KineticModel mode, const std::vector<double>& s, const std::vector<double>& inhibitor,
              const std::vector<double>& v, double vmax, double km) {
  std::vector<double> estimates;
  for (size_t i = 0; i < s.size(); ++i) {
    if (!(inhibitor[i] > 0.0) || !(s[i] > 0.0) || !(v[i] > 0.0)) continue;
    double q = std::nan("");
    switch (mode) {
      case KineticModel::kCompetitive: q = (vmax * s[i] / v[i] - s[i]) / km - 1.0; break;
      case KineticModel::kUncompetitive: q = (vmax * s[i] / v[i] - km) / s[i] - 1.0; break;
      default: q = vmax * s[i] / (v[i] * (km + s[i])) - 1.0; break;
    }
    if (q > 0.0 && std::isfinite(q)) estimates.push_back(inhibitor[i] / q);
  }
  return Median(estimates);
}

std::vector<std::vector<double>> InhibitionStarts(KineticModel model, const std::vector<double>& s,
                                                  const std::vector<double>& inhibitor,
                                                  const std::vector<double>& v) {
  // Vmax and Km from the lowest inhibitor level (usually none).
  double i_low = HUGE_VAL;
  std::vector<double> positive_i;
  for (double x : inhibitor) {
    i_low = std::min(i_low, x);
    if (x > 0.0) positive_i.push_back(x);
  }
  std::vector<double> s0, v0;
  for (size_t k = 0; k < s.size(); ++k) {
    if (inhibitor[k] == i_low) {
      s0.push_back(s[k]);
      v0.push_back(v[k]);
    }
  }
  const double i_typical = Positive(Median(positive_i), 1.0);
  std::vector<std::vector<double>> starts;
  for (const auto& mm : SaturationStarts(s0, v0)) {
    const double vm = mm[0], km = mm[1];
    auto ki = [&](KineticModel mode) {
      return Positive(ModeKi(mode, s, inhibitor, v, vm, km), i_typical);
    };
    if (model == KineticModel::kMixed) {
      starts.push_back({vm, km, ki(KineticModel::kNoncompetitive), 1.0});
      starts.push_back({vm, km, ki(KineticModel::kCompetitive), 10.0});
      starts.push_back({vm, km, 10.0 * ki(KineticModel::kUncompetitive), 0.1});
    } else {
      starts.push_back({vm, km, ki(model)});
      starts.push_back({vm, km, i_typical});
    }
  }
  return starts;
}

// (top, bottom, x50, slope) of a falling dose–response curve over inhibitor.
struct DoseResponse {
  double top, bottom, x50, slope;
};

std::vector<DoseResponse> DoseResponseStarts(const std::vector<double>& inhibitor,
                                             const std::vector<double>& v) {
  const auto means = MeansByX(inhibitor, v, false);
  const double top = means.empty() ? 1.0 : means.front().second;
  const double bottom = means.empty() ? 0.0 : means.back().second;
  std::vector<double> positive;
  for (const auto& m : means) {
    if (m.first > 0.0) positive.push_back(m.first);
  }
  const double geometric_mid =
      positive.empty() ? 1.0 : std::sqrt(positive.front() * positive.back());
  const double x50 = Positive(CrossingX(means, 0.5 * (top + bottom)), geometric_mid);
  std::vector<DoseResponse> starts;
  // Logit: ln((top − y)/(y − bottom)) = h·ln x − h·ln x50 for y between.
  const double lo = std::min(top, bottom), hi = std::max(top, bottom);
  const double margin = 0.02 * (hi - lo);
  std::vector<double> x, y;
  for (size_t i = 0; i < inhibitor.size(); ++i) {
    if (inhibitor[i] > 0.0 && v[i] > lo + margin && v[i] < hi - margin) {
      x.push_back(std::log(inhibitor[i]));
      y.push_back(std::log((top - v[i]) / (v[i] - bottom)));
    }
  }
  double a = 0.0, b = 0.0;
  if (Line(x, y, &a, &b) && b > 0.05 && b < 20.0) {
    starts.push_back({top, bottom, std::exp(-a / b), b});
  }
  starts.push_back({top, bottom, x50, 1.0});
  starts.push_back({top, bottom, geometric_mid, 1.0});
  return starts;
}

}  // namespace

std::vector<std::vector<double>> StartingCandidates(KineticModel model,
                                                    const std::vector<double>& s,
                                                    const std::vector<double>& inhibitor,
                                                    const std::vector<double>& v, double enzyme) {
  switch (model) {
    case KineticModel::kMichaelisMenten: return SaturationStarts(s, v);
    case KineticModel::kSubstrateInhibition: return SubstrateInhibitionStarts(s, v);
    case KineticModel::kHill: return HillStarts(s, v);
    case KineticModel::kCompetitive:
    case KineticModel::kUncompetitive:
    case KineticModel::kNoncompetitive:
    case KineticModel::kMixed: return InhibitionStarts(model, s, inhibitor, v);
    case KineticModel::kMorrison: {
      std::vector<std::vector<double>> starts;
      const double e = Positive(enzyme, 1.0);
      for (const DoseResponse& d : DoseResponseStarts(inhibitor, v)) {
        const double v0 = Positive(d.top, Positive(MaxOf(v, 1.0), 1.0));
        // Tight binding: IC50 = Kiapp + E/2.
        const double kiapp = std::max(d.x50 - 0.5 * e, 0.05 * d.x50);
        starts.push_back({v0, kiapp, e});
        starts.push_back({v0, 0.1 * kiapp, e});
        starts.push_back({v0, 10.0 * kiapp, e});
      }
      return starts;
    }
    case KineticModel::kFourParameterLogistic:
    case KineticModel::kFourParameterLogisticLog10: {
      std::vector<std::vector<double>> starts;
      const bool log_form = model == KineticModel::kFourParameterLogisticLog10;
      for (const DoseResponse& d : DoseResponseStarts(inhibitor, v)) {
        starts.push_back({d.top, d.bottom, log_form ? std::log10(d.x50) : d.x50, d.slope});
      }
      return starts;
    }
  }
  return {};
}

}  // namespace ratewell::detail
