// results.json (schema 1) and the tidy CSV tables.
//
// results.json follows the public contract: schema, software, inputs (path,
// SHA-256, detected format), settings (every setting used, defaults
// included), wells, fits, preferred_model, warnings. Concentrations are µM,
// times minutes, rates µM/min unless a field names another unit. A number
// that could not be determined is null, never a plausible-looking value.
//
// rates.csv: one row per well with data, units in the column names, "NA" for
// a value that does not exist (read as missing by R's read.csv and pandas).
#pragma once

#include <nlohmann/json.hpp>
#include <string>

#include "fitting/analysis.h"

namespace ratewell {

inline constexpr int kResultsSchemaVersion = 1;

// The results.json document. Hashes every input file (plates, layout, assay
// settings); throws std::runtime_error if one can no longer be read.
nlohmann::json ResultsJson(const Analysis& analysis);

// The rates.csv table, header included, LF line ends.
std::string RatesCsv(const Analysis& analysis);

// The version string written into outputs ("0.1.0").
const char* SoftwareVersion();

}  // namespace ratewell
