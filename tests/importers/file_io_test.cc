// Atomic writes that never replace an input of the run.
#include "importers/file_io.h"

#include <gtest/gtest.h>

#include <filesystem>
#include <fstream>
#include <sstream>

#include "importers/input_error.h"

namespace ratewell {
namespace {

namespace fs = std::filesystem;

fs::path ScratchFolder(const std::string& name) {
  const fs::path folder = fs::temp_directory_path() / ("ratewell-file-io-test-" + name);
  fs::remove_all(folder);
  fs::create_directories(folder);
  return folder;
}

std::string ReadAll(const fs::path& path) {
  std::ifstream in(path, std::ios::binary);
  std::stringstream s;
  s << in.rdbuf();
  return s.str();
}

TEST(WriteFileAtomically, ReplacesTheFileAndLeavesNoTemporaryBehind) {
  const fs::path folder = ScratchFolder("atomic");
  const fs::path file = folder / "results.json";
  WriteFileAtomically(file.string(), "first");
  WriteFileAtomically(file.string(), "second");
  EXPECT_EQ(ReadAll(file), "second");
  int entries = 0;
  for (const auto& entry : fs::directory_iterator(folder)) {
    (void)entry;
    ++entries;
  }
  EXPECT_EQ(entries, 1);
}

TEST(WriteFileAtomically, NamesThePathWhenTheFolderIsMissing) {
  const fs::path file = fs::temp_directory_path() / "ratewell-no-such-folder" / "x" / "out.csv";
  try {
    WriteFileAtomically(file.string(), "x");
    FAIL() << "wrote into a missing folder";
  } catch (const std::runtime_error& e) {
    EXPECT_NE(std::string(e.what()).find(file.string()), std::string::npos);
  }
}

TEST(WriteFileAtomically, RefusesToReplaceAProtectedInputUnderAnotherSpelling) {
  const fs::path folder = ScratchFolder("protect");
  const fs::path input = folder / "plate.csv";
  std::ofstream(input) << "original";
  const std::string other_spelling = (folder / "." / "plate.csv").string();
  EXPECT_THROW(WriteFileAtomically(other_spelling, "new", {input.string()}), InputError);
  EXPECT_EQ(ReadAll(input), "original");
}

}  // namespace
}  // namespace ratewell
