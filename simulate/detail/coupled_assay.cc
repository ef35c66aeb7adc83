#include "simulate/detail/coupled_assay.h"

#include <array>
#include <boost/numeric/odeint.hpp>
#include <stdexcept>

namespace ratewell::detail {
namespace {

using State = std::array<double, 3>;  // S, X, N

// Largest number of steps between two requested times before giving up
// (odeint's default of 500 is too few for tight tolerances over long gaps).
constexpr int kMaxStepsBetweenTimes = 10000000;

class System {
 public:
  explicit System(const CoupledWell& well) : well_(well) {}

  double Limit(double nadh) const {
    if (nadh <= 0.0) return 0.0;
    const double k = well_.nadh_half_saturation_uM;
    return k > 0.0 ? nadh / (nadh + k) : 1.0;
  }

  void operator()(const State& x, State& dxdt, double /*t*/) const {
    const double v = EnzymeRate(well_.kinetics, x[0], well_.inhibitor_uM);
    const double g = Limit(x[2]);
    double flux;  // µM/min of product reaching the detection step
    if (well_.tau_min > 0.0) {
      flux = x[1] / well_.tau_min * (well_.consumed ? g : 1.0);
      dxdt[1] = v - flux;
    } else {
      flux = v * (well_.consumed ? g : 1.0);
      dxdt[1] = 0.0;
    }
    dxdt[0] = -v;
    const double signal = well_.per_turnover * flux;
    const double drift =
        well_.drift_uM_per_min < 0.0 ? well_.drift_uM_per_min * g : well_.drift_uM_per_min;
    dxdt[2] = (well_.consumed ? -signal : signal) + drift;
  }

 private:
  const CoupledWell& well_;
};

}  // namespace

std::vector<CoupledState> IntegrateCoupledWell(const CoupledWell& well,
                                               const std::vector<double>& times_min,
                                               const IntegrationTolerances& tolerances) {
  namespace odeint = boost::numeric::odeint;
  std::vector<CoupledState> out;
  out.reserve(times_min.size());
  if (times_min.empty()) return out;
  for (std::size_t i = 0; i < times_min.size(); ++i) {
    if (!(times_min[i] >= 0.0) || (i > 0 && times_min[i] < times_min[i - 1])) {
      throw std::invalid_argument("IntegrateCoupledWell: times must be non-decreasing and >= 0");
    }
  }
  // Distinct times, starting at 0.
  std::vector<double> grid = {0.0};
  for (double t : times_min) {
    if (t > grid.back()) grid.push_back(t);
  }
  std::vector<State> states;
  states.reserve(grid.size());
  State x = {well.substrate0_uM, 0.0, well.nadh0_uM};
  const System system(well);
  if (grid.size() == 1) {
    states.push_back(x);
  } else {
    auto stepper = odeint::make_controlled(tolerances.absolute_uM, tolerances.relative,
                                           odeint::runge_kutta_dopri5<State>());
    const double first_step = (grid[1] - grid[0]) / 100.0;
    odeint::integrate_times(
        stepper, system, x, grid.begin(), grid.end(), first_step,
        [&states](const State& state, double /*t*/) { states.push_back(state); },
        odeint::max_step_checker(kMaxStepsBetweenTimes));
  }
  std::size_t k = 0;
  for (double t : times_min) {
    while (grid[k] < t) ++k;
    const State& s = states[k];
    out.push_back({s[0] > 0.0 ? s[0] : 0.0, s[1] > 0.0 ? s[1] : 0.0, s[2] > 0.0 ? s[2] : 0.0});
  }
  return out;
}

}  // namespace ratewell::detail
