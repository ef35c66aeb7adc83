// Content hashes of input files, recorded in results.json so a report can
// be tied to the exact bytes it came from. (Atomic writes: importers/file_io.h.)
#pragma once

#include <string>
#include <string_view>

namespace ratewell {

// Lower-case hex SHA-256 of a file's bytes (FIPS 180-4), read in chunks.
// Throws std::runtime_error naming the file if it cannot be read.
std::string Sha256OfFile(const std::string& path);
// Same for bytes in memory.
std::string Sha256OfBytes(std::string_view bytes);

}  // namespace ratewell
