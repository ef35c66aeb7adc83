// Fuzzes the saved-analysis reader (*.ratewell): a document that parses
// must write back to JSON that parses to an equal document, and verifying
// its audit chain must not crash; anything else is an InputError.
#include <cstddef>
#include <cstdint>
#include <cstdlib>
#include <string>
#include <string_view>

#include "importers/input_error.h"
#include "session/analysis_document.h"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  const std::string_view text(reinterpret_cast<const char*>(data), size);
  try {
    const ratewell::AnalysisDocument document =
        ratewell::AnalysisDocument::Parse(text, "fuzz.ratewell");
    (void)document.Verify();
    (void)document.CurrentRequest();
    const std::string again = document.ToJson().dump(2);
    if (!(ratewell::AnalysisDocument::Parse(again, "fuzz-again.ratewell") == document)) {
      std::abort();  // what was read must write back to the same document
    }
  } catch (const ratewell::InputError&) {
  }
  return 0;
}
