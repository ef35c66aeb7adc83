// File primitives every module that writes shares: atomic writes that never
// replace an input of the run.
#pragma once

#include <string>
#include <string_view>
#include <vector>

namespace ratewell {

// Writes bytes to path atomically: a new temporary file beside path
// (O_EXCL), written, flushed to disk (fsync), then renamed over path. A
// reader never sees half a file and a crash leaves the old file intact.
// Throws InputError naming the input if path is the same file as one of
// protected_inputs (another spelling of the path is caught), and
// std::runtime_error with the path and the system's reason when the file
// cannot be written (the temporary file is removed).
void WriteFileAtomically(const std::string& path, std::string_view bytes,
                         const std::vector<std::string>& protected_inputs = {});

// Throws InputError (naming the input) if path is an existing file that is
// the same file as one of protected_inputs; otherwise does nothing. Lets a
// caller check every output name before writing the first one.
void RefuseToReplaceInput(const std::string& path,
                          const std::vector<std::string>& protected_inputs);

}  // namespace ratewell
