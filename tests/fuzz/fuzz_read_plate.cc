// Fuzzes the plate readers (detection, every table layout, text decoding and
// the .xlsx path): any input must give a Plate or an InputError, nothing else.
#include <cmath>
#include <cstddef>
#include <cstdint>
#include <cstdlib>
#include <string_view>

#include "importers/input_error.h"
#include "importers/read_plate.h"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  const std::string_view bytes(reinterpret_cast<const char*>(data), size);
  for (auto layout : {ratewell::TableLayout::kAuto, ratewell::TableLayout::kLong,
                      ratewell::TableLayout::kWide, ratewell::TableLayout::kGrid}) {
    ratewell::ReadOptions options;
    options.layout = layout;
    try {
      const ratewell::Plate plate = ratewell::ReadPlateBytes(bytes, "fuzz.csv", options);
      // A valid point is never NaN; a NaN is always marked.
      for (const ratewell::Series& s : plate.series) {
        for (std::size_t i = 0; i < s.size(); ++i) {
          if (s.status[i] == ratewell::PointStatus::kValid && !std::isfinite(s.value[i])) std::abort();
          if (!std::isfinite(s.time_min[i])) std::abort();
        }
      }
    } catch (const ratewell::InputError&) {
    }
  }
  return 0;
}
