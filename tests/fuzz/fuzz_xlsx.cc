// Fuzzes the .xlsx sheet reader (zip container, workbook relations, shared
// strings, sheet XML): a table or an InputError.
#include <cstddef>
#include <cstdint>
#include <string>
#include <string_view>

#include "importers/detail/xlsx.h"
#include "importers/input_error.h"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  const std::string_view bytes(reinterpret_cast<const char*>(data), size);
  try {
    std::string sheet;
    ratewell::detail::ReadXlsxSheet(bytes, "fuzz.xlsx", "", &sheet);
  } catch (const ratewell::InputError&) {
  }
  return 0;
}
