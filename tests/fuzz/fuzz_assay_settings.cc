// Fuzzes the ASSAY.json parser: settings that pass IsValid, or an InputError.
#include <cstddef>
#include <cstdint>
#include <cstdlib>
#include <string>
#include <string_view>

#include "fitting/assay_settings.h"
#include "importers/input_error.h"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  const std::string_view text(reinterpret_cast<const char*>(data), size);
  try {
    const ratewell::AssaySettings settings = ratewell::ParseAssaySettings(text, "fuzz-assay.json");
    std::string error;
    if (!settings.IsValid(&error)) std::abort();  // the parser must not pass invalid settings
  } catch (const ratewell::InputError&) {
  }
  return 0;
}
