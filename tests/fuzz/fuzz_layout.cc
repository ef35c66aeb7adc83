// Fuzzes the layout parser (list and grid forms): a Layout or an InputError.
#include <cstddef>
#include <cstdint>
#include <string_view>

#include "importers/input_error.h"
#include "importers/layout.h"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  const std::string_view bytes(reinterpret_cast<const char*>(data), size);
  try {
    ratewell::ReadLayoutBytes(bytes, "fuzz-layout.csv");
  } catch (const ratewell::InputError&) {
  }
  return 0;
}
