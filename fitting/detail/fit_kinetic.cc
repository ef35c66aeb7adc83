#include "fitting/detail/fit_kinetic.h"

#include <algorithm>
#include <cmath>
#include <limits>
#include <set>
#include <sstream>

#include "fitting/detail/model_starts.h"

namespace ratewell::detail {
namespace {

std::string PointName(const KineticData& data, size_t i) {
  std::ostringstream out;
  out << "point " << i;
  if (!data.points[i].label.empty()) out << " (" << data.points[i].label << ")";
  return out.str();
}

std::string Number(double x) {
  std::ostringstream out;
  out.precision(10);
  out << x;
  return out.str();
}

bool Fail(std::string* error, const std::string& message) {
  if (error != nullptr) *error = message;
  return false;
}

// Distinct values of a covariate among the points, > 0 only if positive_only.
int Distinct(const KineticData& data, bool substrate, bool positive_only) {
  std::set<double> values;
  for (const KineticObservation& p : data.points) {
    const double x = substrate ? p.substrate_uM : p.inhibitor_uM;
    if (!positive_only || x > 0.0) values.insert(x);
  }
  return static_cast<int>(values.size());
}

// Parameters whose limit at infinity is another model (Ksi → ∞ is
// michaelis-menten, alpha → ∞ is competitive, Ki → ∞ is no inhibition, Km → ∞
// is a straight line) get an upper bound that acts as infinity, so that a fit
// heading there stops on a bound — reported as such — instead of running out
// of iterations.
constexpr double kEffectivelyInfinite = 1e6;
// A Hill coefficient beyond this is a step, not a binding curve.
constexpr double kMaxHillCoefficient = 1e3;

double DefaultUpper(std::string_view name, double max_s, double max_i) {
  if (name == "Km" || name == "Ksi" || name == "Khalf") return kEffectivelyInfinite * max_s;
  if (name == "Ki" || name == "Kiapp" || name == "IC50" || name == "E") {
    return kEffectivelyInfinite * max_i;
  }
  if (name == "log10_IC50") return std::log10(kEffectivelyInfinite * max_i);
  if (name == "alpha") return kEffectivelyInfinite;
  if (name == "h") return kMaxHillCoefficient;
  return std::numeric_limits<double>::infinity();
}

}  // namespace

bool BuildKineticProblem(const KineticData& data, KineticModel model, const FitOptions& options,
                         KineticProblem* out, std::string* error) {
  KineticProblem& kp = *out;
  kp = KineticProblem();
  kp.model = model;
  const ModelDescription& description = DescribeModel(model);
  const int k = static_cast<int>(description.parameters.size());
  const int n = static_cast<int>(data.points.size());
  const int groups = data.num_groups();

  // --- the points
  if (n == 0) return Fail(error, "no data points: a fit needs initial rates");
  std::set<std::string> group_names(data.group_names.begin(), data.group_names.end());
  if (group_names.size() != data.group_names.size()) {
    return Fail(error, "group names must be unique");
  }
  for (int i = 0; i < n; ++i) {
    const KineticObservation& p = data.points[i];
    const std::string where = PointName(data, i);
    if (!std::isfinite(p.substrate_uM) || p.substrate_uM < 0.0) {
      return Fail(error, where + ": substrate concentration must be a finite number >= 0, got " +
                             Number(p.substrate_uM));
    }
    if (!std::isfinite(p.inhibitor_uM) || p.inhibitor_uM < 0.0) {
      return Fail(error, where + ": inhibitor concentration must be a finite number >= 0, got " +
                             Number(p.inhibitor_uM));
    }
    if (!std::isfinite(p.rate)) {
      return Fail(error, where + ": the rate must be a finite number, got " + Number(p.rate));
    }
    if (p.group < 0 || p.group >= groups) {
      return Fail(error, where + ": group index " + std::to_string(p.group) +
                             " outside the " + std::to_string(groups) + " group(s) named");
    }
    if (options.weighting == Weighting::kRelative && p.rate == 0.0) {
      return Fail(error, where + ": relative weights (1/rate^2) need a rate other than 0");
    }
    if (options.weighting == Weighting::kInverseVariance &&
        !(p.rate_se.has_value() && std::isfinite(*p.rate_se) && *p.rate_se > 0.0)) {
      return Fail(error, where + ": inverse-variance weights need a finite rate SE > 0");
    }
  }
  if (description.uses_substrate && Distinct(data, true, true) < 2) {
    return Fail(error, std::string(description.id) +
                           " needs at least 2 distinct substrate concentrations above 0");
  }
  if (description.uses_inhibitor && Distinct(data, false, false) < 2) {
    return Fail(error, std::string(description.id) +
                           " needs at least 2 distinct inhibitor concentrations");
  }
  if (description.uses_inhibitor && !data.HasInhibitor()) {
    return Fail(error, std::string(description.id) + " needs points with inhibitor above 0");
  }
  if (description.has_enzyme_parameter && !options.enzyme_uM.has_value()) {
    return Fail(error, std::string(description.id) +
                           " needs the enzyme concentration (FitOptions::enzyme_uM)");
  }

  // --- per-group names
  std::set<std::string> per_group;
  for (const std::string& name : options.per_group) {
    if (ParameterIndex(model, name) < 0) {
      return Fail(error, "per_group names \"" + name + "\", which is not a parameter of " +
                             std::string(description.id));
    }
    per_group.insert(name);
  }
  if (!per_group.empty() && data.group_names.empty()) {
    return Fail(error, "per_group parameters need KineticData::group_names");
  }
  if (!per_group.empty()) {
    std::vector<int> count(groups, 0);
    for (const KineticObservation& p : data.points) ++count[p.group];
    for (int g = 0; g < groups; ++g) {
      if (count[g] == 0) {
        return Fail(error, "group " + data.group_names[g] +
                               " has no points: its per-group parameters cannot be fitted");
      }
    }
  }

  // --- θ layout
  double max_s = 0.0, max_i = 0.0;
  for (const KineticObservation& p : data.points) {
    max_s = std::max(max_s, p.substrate_uM);
    max_i = std::max(max_i, p.inhibitor_uM);
  }
  kp.design.model = model;
  kp.design.num_groups = groups;
  kp.design.slots.assign(groups * k, -1);
  for (int j = 0; j < k; ++j) {
    const ParameterDescription& pd = description.parameters[j];
    const bool split = per_group.count(std::string(pd.name)) > 0;
    for (int g = 0; g < (split ? groups : 1); ++g) {
      ParameterSpec spec;
      spec.name = std::string(pd.name);
      if (split) spec.name += "[" + data.group_names[g] + "]";
      if (pd.positive) spec.lower = 0.0;
      const double upper = DefaultUpper(pd.name, max_s, max_i);
      if (upper > spec.lower) spec.upper = upper;
      if (description.has_enzyme_parameter && pd.name == "E") {
        spec.start = *options.enzyme_uM;
        spec.fixed = !options.fit_enzyme;
      }
      const int index = static_cast<int>(kp.specs.size());
      kp.specs.push_back(spec);
      kp.law_index.push_back(j);
      kp.group.push_back(split ? data.group_names[g] : std::string());
      kp.unit.push_back(ParameterUnit(pd.kind, data));
      kp.start_given.push_back(spec.fixed ? 1 : 0);
      if (split) {
        kp.design.slots[g * k + j] = index;
      } else {
        for (int h = 0; h < groups; ++h) kp.design.slots[h * k + j] = index;
      }
    }
  }
  kp.design.num_parameters = static_cast<int>(kp.specs.size());

  // --- parameter controls: a per-group name first, then the plain name
  for (const ParameterControl& control : options.parameters) {
    bool matched = false;
    for (size_t e = 0; e < kp.specs.size(); ++e) {
      const std::string plain(description.parameters[kp.law_index[e]].name);
      if (control.name != kp.specs[e].name && control.name != plain) continue;
      matched = true;
      ParameterSpec& spec = kp.specs[e];
      if (control.lower) spec.lower = *control.lower;
      if (control.upper) spec.upper = *control.upper;
      if (control.start) {
        spec.start = *control.start;
        kp.start_given[e] = 1;
      }
      if (control.fixed_value) {
        spec.start = *control.fixed_value;
        spec.fixed = true;
        kp.start_given[e] = 1;
      }
      if (!(spec.lower < spec.upper)) {
        return Fail(error, "parameter " + spec.name + ": lower bound " + Number(spec.lower) +
                               " is not below upper bound " + Number(spec.upper));
      }
      if (kp.start_given[e] && (spec.start < spec.lower || spec.start > spec.upper)) {
        return Fail(error, "parameter " + spec.name + ": value " + Number(spec.start) +
                               " outside its bounds [" + Number(spec.lower) + ", " +
                               Number(spec.upper) + "]");
      }
    }
    if (!matched) {
      return Fail(error, "ParameterControl names \"" + control.name +
                             "\", which is not a parameter of " + std::string(description.id));
    }
  }
  for (const ParameterSpec& spec : kp.specs) kp.num_free += spec.fixed ? 0 : 1;
  if (kp.num_free == 0) return Fail(error, "every parameter is fixed: nothing to fit");
  if (n <= kp.num_free) {
    return Fail(error, std::string(description.id) + " with " + std::to_string(kp.num_free) +
                           " free parameters needs more than " + std::to_string(kp.num_free) +
                           " points, got " + std::to_string(n));
  }
  for (const ParameterSpec& spec : kp.specs) {
    kp.log_scale.push_back(spec.lower == 0.0);
  }

  // --- observations
  for (const KineticObservation& p : data.points) {
    kp.design.substrate.push_back(p.substrate_uM);
    kp.design.inhibitor.push_back(p.inhibitor_uM);
    kp.design.group.push_back(p.group);
    kp.response.push_back(p.rate);
    double w = 1.0;
    if (options.weighting == Weighting::kRelative) w = 1.0 / (p.rate * p.rate);
    if (options.weighting == Weighting::kInverseVariance) w = 1.0 / (*p.rate_se * *p.rate_se);
    kp.sqrt_weight.push_back(std::sqrt(w));
    kp.sum_log_weights += std::log(w);
  }
  return true;
}

std::vector<std::vector<double>> RankedStarts(const KineticProblem& kp,
                                              const ResidualSource& source,
                                              const KineticData& data, const FitOptions& options,
                                              int max_starts) {
  const ModelDescription& description = DescribeModel(kp.model);
  const int k = static_cast<int>(description.parameters.size());
  const double enzyme = options.enzyme_uM.value_or(1.0);
  auto candidates_for = [&](int group) {
    std::vector<double> s, inhibitor, v;
    for (size_t i = 0; i < data.points.size(); ++i) {
      if (group >= 0 && data.points[i].group != group) continue;
      s.push_back(data.points[i].substrate_uM);
      inhibitor.push_back(data.points[i].inhibitor_uM);
      v.push_back(data.points[i].rate);
    }
    return StartingCandidates(kp.model, s, inhibitor, v, enzyme);
  };
  // Objective of θ over a subset of observations (group < 0: all).
  auto objective = [&](const std::vector<double>& theta, int group) {
    double sum = 0.0;
    for (size_t i = 0; i < data.points.size(); ++i) {
      if (group >= 0 && data.points[i].group != group) continue;
      double f = 0.0;
      if (!source.Predict(static_cast<int>(i), theta.data(), &f)) {
        return std::numeric_limits<double>::infinity();
      }
      const double u = kp.sqrt_weight[i] * (kp.response[i] - f);
      sum += u * u;
    }
    return std::isfinite(sum) ? sum : std::numeric_limits<double>::infinity();
  };
  // Writes a law's values into θ: for every group (group < 0), or only the
  // per-group entries of one group.
  auto apply = [&](std::vector<double>* theta, const std::vector<double>& law_values, int group) {
    for (int g = std::max(group, 0); g < (group < 0 ? kp.design.num_groups : group + 1); ++g) {
      for (int j = 0; j < k; ++j) {
        const int e = kp.design.slots[g * k + j];
        if (kp.start_given[e]) continue;
        if (group >= 0 && kp.group[e].empty()) continue;  // shared entries come from the pool
        const ParameterSpec& spec = kp.specs[e];
        (*theta)[e] = std::min(std::max(law_values[j], spec.lower), spec.upper);
      }
    }
  };

  std::vector<double> base(kp.specs.size());
  for (size_t e = 0; e < kp.specs.size(); ++e) base[e] = kp.specs[e].start;
  std::vector<std::pair<double, std::vector<double>>> ranked;
  for (const std::vector<double>& pooled : candidates_for(-1)) {
    std::vector<double> theta = base;
    apply(&theta, pooled, -1);
    // Per-group entries: each group's own best candidate.
    for (int g = 0; g < kp.design.num_groups && data.num_groups() > 1; ++g) {
      double best = std::numeric_limits<double>::infinity();
      std::vector<double> best_theta = theta;
      for (const std::vector<double>& own : candidates_for(g)) {
        std::vector<double> trial = theta;
        apply(&trial, own, g);
        const double value = objective(trial, g);
        if (value < best) {
          best = value;
          best_theta = trial;
        }
      }
      theta = best_theta;
    }
    const double value = objective(theta, -1);
    if (std::isfinite(value)) ranked.emplace_back(value, theta);
  }
  std::stable_sort(ranked.begin(), ranked.end(),
                   [](const auto& a, const auto& b) { return a.first < b.first; });
  std::vector<std::vector<double>> starts;
  for (const auto& [value, theta] : ranked) {
    if (static_cast<int>(starts.size()) >= max_starts) break;
    if (std::find(starts.begin(), starts.end(), theta) == starts.end()) starts.push_back(theta);
  }
  if (starts.empty()) starts.push_back(base);
  return starts;
}

}  // namespace ratewell::detail
