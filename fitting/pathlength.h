// Pathlength: how far the light travels through the liquid in each well.
//
// A plate reader shines vertically through the well, so the pathlength l is
// the liquid height, not 1 cm, and Beer–Lambert (fitting/beer_lambert.h,
// c = A / (ε·l)) needs it. Four ways to know it (AssaySettings::Pathlength):
//
//   fixed       l = cm for every well.
//   geometry    l = V / S: a volume V in µL is V × 1e-3 cm³, over the well's
//               floor area S in cm² (a straight-walled well):
//               200 µL in a 0.32 cm² well → 0.2 cm³ / 0.32 cm² = 0.625 cm.
//   water-peak  water absorbs near 977 nm in proportion to its depth; a
//               baseline at 900 nm removes the plate and scatter:
//               l = (Ā_sample − Ā_reference) / k, with k ≈ 0.18 per cm near
//               25 °C (common practice, value from memory). Ā is the mean of
//               the well's valid reads at that wavelength. Per well.
//   standards   wells of known NADH concentration c (layout role "standard",
//               column standard_uM) are fitted by ordinary least squares,
//               A = a + b·c with c in µM, so b = ε·l·1e-6 and
//               l = b × 1e6 / ε (one value for the plate; the standards are
//               assumed to hold the same volume as the other wells). Each
//               standard well contributes the mean of its valid reads at the
//               detection wavelength, readings above the absorbance ceiling
//               left out: a standard is stable, so the mean is more robust
//               than the first read alone.
//
// Measured or computed results (geometry, water-peak, standards) outside
// 0.05–2 cm (kPlausibleWellPathlength{Min,Max}Cm in fitting/units.h) are kept
// but flagged and warned about; a fixed value is the user's own and is not
// flagged; a well with no valid
// water-peak reads gets NaN, flagged kNoValidReads — callers must check the
// flag before using a well's value.
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "fitting/assay_settings.h"
#include "importers/layout.h"
#include "importers/plate.h"

namespace ratewell {

// Why a well's pathlength needs a person's attention.
enum class PathlengthFlag {
  kNone,          // usable
  kNoValidReads,  // water-peak: no valid read at one of the two wavelengths; value NaN
  kOutOfRange,    // outside 0.05–2 cm (or not positive); value kept as computed
};
const char* PathlengthFlagToString(PathlengthFlag flag);  // "none", "no-valid-reads", "out-of-range"

// Ordinary least-squares line y = intercept + slope · x, the closed form:
//   x̄, ȳ means; Sxx = Σ(x − x̄)²; Sxy = Σ(x − x̄)(y − ȳ);
//   slope = Sxy / Sxx; intercept = ȳ − slope · x̄;
//   s² = SSR / (n − 2), SSR = Σ(y − intercept − slope · x)²;
//   se(slope) = √(s² / Sxx); se(intercept) = √(s² (1/n + x̄² / Sxx));
//   R² = 1 − SSR / SST, SST = Σ(y − ȳ)² (0 when SST = 0, as SciPy's linregress).
struct LineFit {
  double slope = 0.0;
  double slope_se = 0.0;
  double intercept = 0.0;
  double intercept_se = 0.0;
  double r_squared = 0.0;
  double residual_sd = 0.0;  // s = √(SSR / (n − 2))
  int n = 0;
};

// Fits the line above. Throws std::invalid_argument unless x and y have the
// same size n ≥ 3, all finite, and x is not constant.
LineFit FitLine(const std::vector<double>& x, const std::vector<double>& y);

// One standard well as used in the standards fit.
struct StandardPoint {
  int well = -1;               // well index
  double standard_uM = 0.0;    // NADH concentration from the layout
  double absorbance = 0.0;     // mean of the used reads
  int reads = 0;               // reads averaged
};

// The NADH standard series behind a "standards" pathlength.
struct StandardsFit {
  // A = intercept + slope · standard_uM; slope is ε·l per µM (A/µM).
  LineFit line;
  int distinct_concentrations = 0;
  std::vector<StandardPoint> points;
  double cm = 0.0;     // line.slope × 1e6 / ε
  double se_cm = 0.0;  // line.slope_se × 1e6 / ε
};

struct PathlengthResult {
  std::string mode;  // PathlengthModeToString of the mode used
  // Per well (index = row * columns + column), plate.geometry.num_wells() long.
  std::vector<double> cm_per_well;
  // Standard error of each value: 0 for fixed and geometry (exact by
  // definition); for water-peak the scatter of the reads,
  // √(s²_sample/n_sample + s²_reference/n_reference) / k, and 0 when either
  // wavelength was read once (no scatter to see); the uncertainty of k itself
  // is not included. For standards, StandardsFit::se_cm.
  std::vector<double> se_cm_per_well;
  std::vector<PathlengthFlag> flag_per_well;
  std::vector<std::string> warnings;
  std::optional<StandardsFit> standards;  // set in mode standards
};

// l = volume_uL × 1e-3 / well_area_cm2. Throws std::invalid_argument unless
// both are positive and finite.
double GeometryPathlengthCm(double volume_uL, double well_area_cm2);

// l = (absorbance_sample − absorbance_reference) / k_per_cm. Throws
// std::invalid_argument unless k is positive and finite.
double WaterPeakPathlengthCm(double absorbance_sample, double absorbance_reference,
                             double k_per_cm);

// The pathlength of every well of plate for settings.pathlength.
//   layout: needed (non-null) in mode standards; otherwise unused.
// Throws InputError when the data cannot give a pathlength:
//   water-peak: the plate lacks sample_nm or reference_nm (names the plate
//               file and lists the wavelengths it has);
//   standards:  no layout, a layout for another plate size, a standard well
//               without standard_uM, the plate lacks the detection wavelength,
//               fewer than 3 distinct standard concentrations with usable
//               reads, or absorbance not rising with concentration.
// Throws std::invalid_argument when settings are not valid (IsValid).
PathlengthResult ComputePathlength(const AssaySettings& settings, const Plate& plate,
                                   const Layout* layout = nullptr);

}  // namespace ratewell
