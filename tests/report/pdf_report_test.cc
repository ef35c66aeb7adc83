// The PDF report, read back with poppler's command-line tools (pdftotext,
// pdfinfo, pdffonts from poppler-utils: a reader the project did not write)
// and checked against coreutils' sha256sum for the input hashes.
#include "report/pdf_report.h"

#include <gtest/gtest.h>
#include <unistd.h>

#include <array>
#include <cmath>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <memory>
#include <regex>
#include <set>
#include <sstream>
#include <string>

#include "importers/input_error.h"
#include "report/results.h"

namespace ratewell {
namespace {

namespace fs = std::filesystem;

std::string DemoDir(const std::string& name) {
  return std::string(RATEWELL_TEST_DATA_DIR) + "/../../demo-plates/" + name;
}

// CTest runs each test in its own process, several at once: the process id
// keeps their folders apart.
fs::path ScratchFolder(const std::string& name) {
  const fs::path folder = fs::temp_directory_path() /
                          ("ratewell-pdf-test-" + name + "-" + std::to_string(getpid()));
  fs::remove_all(folder);
  fs::create_directories(folder);
  return folder;
}

// Runs a shell command and returns its standard output; the exit status in *status.
std::string RunCommand(const std::string& command, int* status = nullptr) {
  std::string output;
  FILE* pipe = popen(command.c_str(), "r");
  if (pipe == nullptr) return output;
  std::array<char, 4096> buffer;
  std::size_t n = 0;
  while ((n = fread(buffer.data(), 1, buffer.size(), pipe)) > 0) output.append(buffer.data(), n);
  const int rc = pclose(pipe);
  if (status != nullptr) *status = rc;
  return output;
}

std::string Quote(const std::string& path) { return "'" + path + "'"; }

// pdftotext's text with every run of white space made one space (table cells
// and wrapped sentences break lines where the layout wants).
std::string PdfText(const fs::path& pdf, int first_page = 0, int last_page = 0) {
  std::string command = "pdftotext -enc UTF-8";
  if (first_page > 0) command += " -f " + std::to_string(first_page);
  if (last_page > 0) command += " -l " + std::to_string(last_page);
  command += " " + Quote(pdf.string()) + " - 2>/dev/null";
  const std::string raw = RunCommand(command);
  std::string text;
  bool space = false;
  for (char c : raw) {
    if (c == ' ' || c == '\n' || c == '\t' || c == '\r' || c == '\f') {
      space = true;
      continue;
    }
    if (space && !text.empty()) text += ' ';
    space = false;
    text += c;
  }
  return text;
}

int PdfPageCount(const fs::path& pdf) {
  const std::string info = RunCommand("pdfinfo " + Quote(pdf.string()) + " 2>/dev/null");
  std::smatch match;
  if (std::regex_search(info, match, std::regex(R"(Pages:\s+(\d+))"))) return std::stoi(match[1]);
  return -1;
}

std::string Sha256Sum(const std::string& path) {
  const std::string out = RunCommand("sha256sum " + Quote(path));
  return out.substr(0, 64);
}

std::string Printf(const char* format, double value) {
  char buffer[64];
  std::snprintf(buffer, sizeof buffer, format, value);
  return buffer;
}

std::string ReadAll(const fs::path& path) {
  std::ifstream in(path, std::ios::binary);
  std::stringstream s;
  s << in.rdbuf();
  return s.str();
}

bool PopplerAvailable() {
  int status = 0;
  RunCommand("pdftotext -v 2>/dev/null; pdfinfo -v 2>/dev/null", &status);
  return status == 0;
}

AnalysisRequest DemoRequest(const std::string& folder, const std::string& plate_file) {
  AnalysisRequest request;
  request.plate_paths = {DemoDir(folder) + "/" + plate_file};
  request.layout_path = DemoDir(folder) + "/layout.csv";
  request.assay_path = DemoDir(folder) + "/ASSAY.json";
  // Asymptotic intervals keep the run short; the report shows whatever
  // method was used.
  request.interval_method = IntervalMethod::kAsymptotic;
  return request;
}

// One analysis of the lot-release plate (96 wells, Michaelis–Menten family)
// and its report, shared by the tests below.
class PdfReportTest : public ::testing::Test {
 protected:
  static void SetUpTestSuite() {
    EnsureGuiApplication();
    analysis_ = std::make_unique<Analysis>(RunAnalysis(DemoRequest("kn2-lot-release", "kn2-2611a_long.csv")));
    // One well set aside by the user, so the exclusion appears in the report.
    SetExclusion(analysis_.get(), 0, "A01", std::string("bubble seen in the well"));
    FitKinetics(analysis_.get());
    results_ = std::make_unique<nlohmann::json>(ResultsJson(*analysis_));
    folder_ = ScratchFolder("suite");
    pdf_ = folder_ / "report.pdf";
    PdfReportOptions options;
    options.date = "2031-05-17 10:42";
    WritePdfReport(*analysis_, *results_, pdf_.string(), options);
  }
  static void TearDownTestSuite() {
    fs::remove_all(folder_);
    analysis_.reset();
    results_.reset();
  }
  void SetUp() override {
    if (!PopplerAvailable()) GTEST_FAIL() << "poppler-utils (pdftotext, pdfinfo) is needed by these tests";
  }

  static std::unique_ptr<Analysis> analysis_;
  static std::unique_ptr<nlohmann::json> results_;
  static fs::path folder_;
  static fs::path pdf_;
};
std::unique_ptr<Analysis> PdfReportTest::analysis_;
std::unique_ptr<nlohmann::json> PdfReportTest::results_;
fs::path PdfReportTest::folder_;
fs::path PdfReportTest::pdf_;

TEST_F(PdfReportTest, FileIsAPdfDocument) {
  const std::string bytes = ReadAll(pdf_);
  ASSERT_GT(bytes.size(), 1000u);
  EXPECT_EQ(bytes.substr(0, 5), "%PDF-");
  EXPECT_NE(bytes.rfind("%%EOF"), std::string::npos);
  EXPECT_GT(PdfPageCount(pdf_), 3);
}

TEST_F(PdfReportTest, TextHoldsTheSha256OfEveryInputAsSha256sumComputesIt) {
  const std::string text = PdfText(pdf_);
  std::vector<std::string> inputs = analysis_->request.plate_paths;
  inputs.push_back(analysis_->request.layout_path);
  inputs.push_back(analysis_->request.assay_path);
  for (const std::string& input : inputs) {
    const std::string hash = Sha256Sum(input);
    ASSERT_EQ(hash.size(), 64u) << input;
    EXPECT_NE(text.find(hash), std::string::npos) << "hash of " << input << " not in the PDF text";
  }
  // And the detected format of the plate file.
  EXPECT_NE(text.find(analysis_->plates[0].report.format), std::string::npos);
}

TEST_F(PdfReportTest, EveryPageIsNumberedOutOfTheTotalAndCarriesVersionAndDate) {
  const int pages = PdfPageCount(pdf_);
  ASSERT_GT(pages, 0);
  for (int k = 1; k <= pages; ++k) {
    const std::string text = PdfText(pdf_, k, k);
    EXPECT_NE(text.find("page " + std::to_string(k) + " of " + std::to_string(pages)), std::string::npos)
        << "page " << k;
    EXPECT_NE(text.find(std::string("ratewell ") + SoftwareVersion()), std::string::npos) << "page " << k;
    EXPECT_NE(text.find("2031-05-17 10:42"), std::string::npos) << "page " << k;
  }
}

TEST_F(PdfReportTest, CautionIsOnTheFirstAndTheLastPage) {
  const int pages = PdfPageCount(pdf_);
  const std::string first = PdfText(pdf_, 1, 1);
  const std::string last = PdfText(pdf_, pages, pages);
  const std::string caution = kPdfReportCaution;
  // Page 1 has it twice: the box and the footer.
  const std::size_t at = first.find(caution);
  ASSERT_NE(at, std::string::npos);
  EXPECT_NE(first.find(caution, at + 1), std::string::npos);
  EXPECT_NE(last.find(caution), std::string::npos);
}

TEST_F(PdfReportTest, ModelComparisonNamesEveryCandidateAndThePreferredOne) {
  const KineticAnalysis& k = analysis_->kinetics;
  ASSERT_TRUE(k.attempted) << k.reason;
  ASSERT_TRUE(k.choice.chosen) << k.choice.reason;
  const std::string text = PdfText(pdf_);
  for (const KineticFit& fit : k.choice.fits) {
    EXPECT_NE(text.find(KineticModelToString(fit.model)), std::string::npos) << KineticModelToString(fit.model);
  }
  EXPECT_NE(text.find(std::string("Preferred model: ") + KineticModelToString(k.choice.preferred)),
            std::string::npos);
  EXPECT_NE(text.find(k.choice.reason.substr(0, 40)), std::string::npos);
  EXPECT_NE(text.find("AICc"), std::string::npos);
  EXPECT_NE(text.find("Akaike weight"), std::string::npos);
}

TEST_F(PdfReportTest, ParameterTableShowsValueSeAndIntervalWithFourSignificantDigits) {
  const KineticFit* fit = analysis_->kinetics.choice.Preferred();
  ASSERT_NE(fit, nullptr);
  const std::string text = PdfText(pdf_);
  for (const std::string name : {"Vmax", "Km"}) {
    const ParameterEstimate* p = fit->Find(name);
    ASSERT_NE(p, nullptr) << name;
    // The row as the table writes it: name, value, unit, SE, [lower, upper].
    std::string row = name + " " + Printf("%.4g", p->value) + " ";
    EXPECT_NE(text.find(row), std::string::npos) << "row start '" << row << "'";
    ASSERT_TRUE(p->se_determined);
    EXPECT_NE(text.find(Printf("%.4g", p->se)), std::string::npos) << name << " SE";
    ASSERT_TRUE(p->ci.determined);
    const std::string interval = "[" + Printf("%.4g", p->ci.lower) + ", " + Printf("%.4g", p->ci.upper) + "]";
    EXPECT_NE(text.find(interval), std::string::npos) << interval;
  }
  // The demo assay gives the enzyme concentration, so kcat is derived.
  EXPECT_NE(text.find("kcat"), std::string::npos);
}

TEST_F(PdfReportTest, ExcludedWellIsListedWithItsReason) {
  const std::string text = PdfText(pdf_);
  EXPECT_NE(text.find("A01"), std::string::npos);
  EXPECT_NE(text.find("bubble seen in the well"), std::string::npos);
}

TEST_F(PdfReportTest, EveryNonEmptyWellHasATraceTitledWithItsName) {
  // The trace pages come last; their chart titles are real text.
  const int pages = PdfPageCount(pdf_);
  int first_trace_page = -1;
  for (int k = 1; k <= pages && first_trace_page < 0; ++k) {
    if (PdfText(pdf_, k, k).find("Traces: plate 1") != std::string::npos) first_trace_page = k;
  }
  ASSERT_GT(first_trace_page, 0);
  const std::string traces = PdfText(pdf_, first_trace_page, pages);
  int shown = 0;
  for (const WellRate& w : analysis_->plate_rates[0].wells) {
    if (w.role == WellRole::kEmpty) continue;
    ++shown;
    EXPECT_NE(traces.find(w.name + " "), std::string::npos) << w.name;
  }
  // 6 × 8 traces per page.
  const int expected_pages = (shown + 47) / 48;
  EXPECT_EQ(pages - first_trace_page + 1, expected_pages);
}

TEST_F(PdfReportTest, FontsAreEmbeddedSoTheTextIsSelectable) {
  const std::string fonts = RunCommand("pdffonts " + Quote(pdf_.string()) + " 2>/dev/null");
  EXPECT_NE(fonts.find("DejaVu"), std::string::npos) << fonts;
  // pdffonts prints "emb" yes/no per font; none may be left unembedded.
  std::istringstream lines(fonts);
  std::string line;
  int listed = 0;
  while (std::getline(lines, line)) {
    if (line.find("DejaVu") == std::string::npos) continue;
    ++listed;
    EXPECT_NE(line.find(" yes "), std::string::npos) << line;
  }
  EXPECT_GT(listed, 0);
}

TEST_F(PdfReportTest, RefusesToWriteOverAnInputAndLeavesItAlone) {
  const std::string plate = analysis_->request.plate_paths[0];
  const std::string before = Sha256Sum(plate);
  EXPECT_THROW(WritePdfReport(*analysis_, *results_, plate), InputError);
  EXPECT_EQ(Sha256Sum(plate), before);
  const std::string layout = analysis_->request.layout_path;
  EXPECT_THROW(WritePdfReport(*analysis_, *results_, layout), InputError);
}

TEST_F(PdfReportTest, FailedWriteLeavesNoFileBehind) {
  const fs::path target = folder_ / "no-such-folder" / "report.pdf";
  EXPECT_THROW(WritePdfReport(*analysis_, *results_, target.string()), std::runtime_error);
  EXPECT_FALSE(fs::exists(target));
  EXPECT_FALSE(fs::exists(target.parent_path()));
}

TEST_F(PdfReportTest, ReplacingAnEarlierReportKeepsOneCompleteFile) {
  const fs::path target = folder_ / "again.pdf";
  std::ofstream(target) << "an older report";
  PdfReportOptions options;
  options.include_traces = false;
  WritePdfReport(*analysis_, *results_, target.string(), options);
  const std::string bytes = ReadAll(target);
  EXPECT_EQ(bytes.substr(0, 5), "%PDF-");
  // No temporary file is left beside it.
  int files = 0;
  for (const auto& entry : fs::directory_iterator(folder_)) files += entry.is_regular_file() ? 1 : 0;
  EXPECT_EQ(files, 2);  // report.pdf and again.pdf
}

TEST_F(PdfReportTest, KineticPagesSayWhyWhenTheFitWasNotAttempted) {
  Analysis copy = *analysis_;
  copy.kinetics = KineticAnalysis();
  copy.kinetics.attempted = false;
  copy.kinetics.reason = "no sample well has a substrate concentration in the layout";
  const fs::path target = folder_ / "no-fit.pdf";
  PdfReportOptions options;
  options.include_traces = false;
  WritePdfReport(copy, *results_, target.string(), options);
  const std::string text = PdfText(target);
  EXPECT_NE(text.find("The kinetic fit was not attempted: no sample well has a substrate concentration"),
            std::string::npos);
  EXPECT_EQ(text.find("Model comparison"), std::string::npos);
  fs::remove(target);
}

// The 384-well inhibitor series: a global fit over the [S]×[I] matrix, one
// colour and legend entry per inhibitor level, and 6 × 8 traces per page.
TEST(PdfReportInhibition, ShowsEveryInhibitorLevelEveryModeAndEveryTrace) {
  if (!PopplerAvailable()) GTEST_FAIL() << "poppler-utils (pdftotext, pdfinfo) is needed by this test";
  EnsureGuiApplication();
  const Analysis analysis = RunAnalysis(DemoRequest("cbx-inhibitor-series", "cbx214_grid.csv"));
  ASSERT_TRUE(analysis.kinetics.attempted) << analysis.kinetics.reason;
  const fs::path folder = ScratchFolder("inhibition");
  const fs::path pdf = folder / "report.pdf";
  WritePdfReport(analysis, ResultsJson(analysis), pdf.string());
  const std::string text = PdfText(pdf);
  for (const std::string mode : {"competitive", "uncompetitive", "noncompetitive", "mixed"}) {
    EXPECT_NE(text.find(mode + " "), std::string::npos) << mode;
  }
  // Legend entries: "I = <3 significant digits> µM" per level.
  std::set<double> levels;
  int non_empty = 0;
  for (const WellRate& w : analysis.plate_rates[0].wells) {
    if (w.role == WellRole::kSample && w.HasRate()) levels.insert(w.inhibitor_uM);
    non_empty += w.role == WellRole::kEmpty ? 0 : 1;
  }
  ASSERT_GE(levels.size(), 2u);
  for (double level : levels) {
    const std::string label = "I = " + Printf("%.3g", level) + " µM";
    EXPECT_NE(text.find(label), std::string::npos) << label;
  }
  const KineticFit* fit = analysis.kinetics.choice.Preferred();
  ASSERT_NE(fit, nullptr);
  const ParameterEstimate* ki = fit->Find("Ki");
  ASSERT_NE(ki, nullptr);
  EXPECT_NE(text.find("Ki " + Printf("%.4g", ki->value) + " "), std::string::npos);
  // Trace pages: the last ceil(non-empty wells / 48).
  const int pages = PdfPageCount(pdf);
  const int trace_pages = (non_empty + 47) / 48;
  EXPECT_NE(PdfText(pdf, pages - trace_pages + 1, pages - trace_pages + 1).find("Traces: plate 1"),
            std::string::npos);
  EXPECT_EQ(PdfText(pdf, pages - trace_pages, pages - trace_pages).find("Traces: plate 1"), std::string::npos);
  // Vector traces of 384 wells stay a sensible size.
  constexpr std::uintmax_t kMaxBytes = 8u << 20;
  EXPECT_LT(fs::file_size(pdf), kMaxBytes);
  fs::remove_all(folder);
}

TEST(PdfReportOptions, InvalidTraceGridIsRejected) {
  EnsureGuiApplication();
  Analysis analysis;
  PdfReportOptions options;
  options.trace_columns = 0;
  EXPECT_THROW(RenderPdfReport(analysis, nlohmann::json::object(), options), std::invalid_argument);
}

TEST(EnsureGuiApplication, ReturnsTheSameApplicationEveryTime) {
  QApplication* first = EnsureGuiApplication();
  ASSERT_NE(first, nullptr);
  EXPECT_EQ(EnsureGuiApplication(), first);
}

}  // namespace
}  // namespace ratewell
