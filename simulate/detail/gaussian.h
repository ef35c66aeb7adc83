// Internal: reproducible standard normal deviates.
//
// std::mt19937_64 is specified bit for bit by the C++ standard; the
// distributions of <random> are not, so the uniform-to-normal step is our own
// Box–Muller transform (Box & Muller 1958): with u1 in (0, 1] and u2 in
// [0, 1) from 53-bit fractions of the engine's output,
//   z0 = √(−2 ln u1) · cos(2π u2),   z1 = √(−2 ln u1) · sin(2π u2),
// returned one after the other.
#pragma once

#include <cmath>
#include <cstdint>
#include <random>

namespace ratewell::detail {

class GaussianStream {
 public:
  explicit GaussianStream(std::uint64_t seed) : engine_(seed) {}

  double Next() {
    if (has_spare_) {
      has_spare_ = false;
      return spare_;
    }
    constexpr double kTwoPi = 6.283185307179586476925286766559;
    const double u1 = 1.0 - Uniform();  // (0, 1]: log is finite
    const double u2 = Uniform();
    const double r = std::sqrt(-2.0 * std::log(u1));
    spare_ = r * std::sin(kTwoPi * u2);
    has_spare_ = true;
    return r * std::cos(kTwoPi * u2);
  }

 private:
  // [0, 1) with 53 random bits.
  double Uniform() { return static_cast<double>(engine_() >> 11) * 0x1.0p-53; }

  std::mt19937_64 engine_;
  double spare_ = 0.0;
  bool has_spare_ = false;
};

}  // namespace ratewell::detail
