// Input hashing.
#include "report/files.h"

#include <gtest/gtest.h>

#include <filesystem>
#include <fstream>
#include <sstream>

namespace ratewell {
namespace {

namespace fs = std::filesystem;

fs::path ScratchFolder(const std::string& name) {
  const fs::path folder = fs::temp_directory_path() / ("ratewell-report-test-" + name);
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

// FIPS 180-2, Appendix B.1 and B.2: the published SHA-256 examples.
TEST(Sha256, MatchesThePublishedFipsExamples) {
  EXPECT_EQ(Sha256OfBytes("abc"),
            "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad");
  EXPECT_EQ(Sha256OfBytes("abcdbcdecdefdefgefghfghighijhijkijkljklmklmnlmnomnopnopq"),
            "248d6a61d20638b8e5c026930c3e6039a33ce45964ff2167f6ecedd419db06c1");
}

TEST(Sha256, HashesAFileLikeItsBytes) {
  const fs::path folder = ScratchFolder("hash");
  const fs::path file = folder / "plate.csv";
  std::ofstream(file, std::ios::binary) << "abc";
  EXPECT_EQ(Sha256OfFile(file.string()), Sha256OfBytes("abc"));
  EXPECT_THROW(Sha256OfFile((folder / "missing.csv").string()), std::runtime_error);
}

}  // namespace
}  // namespace ratewell
