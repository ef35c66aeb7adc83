// Automatic starting values for the rate laws: read-offs from the data and
// linearised forms (Hanes–Woolf, Hill plot, logit). They are starts only;
// the fit always goes on to the least-squares optimum.
#pragma once

#include <vector>

#include "fitting/kinetic_models.h"

namespace ratewell::detail {

// Candidate parameter vectors (DescribeModel order) for `model` on points
// (s[i], inhibitor[i], v[i]), most plausible first; never empty, every value
// finite and positive parameters > 0. enzyme: Morrison's E (start or fixed
// value), ignored by the other models.
std::vector<std::vector<double>> StartingCandidates(KineticModel model,
                                                    const std::vector<double>& s,
                                                    const std::vector<double>& inhibitor,
                                                    const std::vector<double>& v, double enzyme);

}  // namespace ratewell::detail
