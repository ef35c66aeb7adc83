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
//
// Beyond the contract's keys, results.json carries per fit: equation,
// preferred, num_parameters, residual_sd, aic, delta_aicc, akaike_weight,
// termination, message, weighting, loss, derived {kcat, …}, warnings
// [{code, message}], runs_test, bootstrap; per parameter: ci_level,
// ci_note, se_reason / ci_reason (when null), determined, fixed, at_bound;
// and at the top level model_choice {requested, attempted, family, points,
// reason, tests [F tests of nested pairs]}.
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

// The "fits" array of results.json alone: every candidate fit, the
// preferred one marked (the GUI and the PDF show the same table).
nlohmann::json FitsJson(const Analysis& analysis);

// parameters.csv: one row per (model, parameter), fitted and derived
// (kcat, kcat/Km, specific activity, Ki by Cheng–Prusoff, IC50), for every
// candidate model; "NA" where a number was not determined, and the reason.
std::string ParametersCsv(const Analysis& analysis);

// The version string written into outputs ("0.1.0").
const char* SoftwareVersion();

}  // namespace ratewell
