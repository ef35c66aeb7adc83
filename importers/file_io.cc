#include "importers/file_io.h"

#include <fcntl.h>
#include <unistd.h>

#include <atomic>
#include <cerrno>
#include <cstdio>
#include <cstring>
#include <filesystem>
#include <stdexcept>
#include <system_error>

#include "importers/input_error.h"

namespace ratewell {

void RefuseToReplaceInput(const std::string& path,
                          const std::vector<std::string>& protected_inputs) {
  namespace fs = std::filesystem;
  for (const std::string& input : protected_inputs) {
    std::error_code error;
    if (fs::exists(path, error) && fs::equivalent(path, input, error)) {
      throw InputError(input, 0, 0,
                       "refusing to write " + path +
                           " over an input file of this run; choose another output folder");
    }
  }
}

void WriteFileAtomically(const std::string& path, std::string_view bytes,
                         const std::vector<std::string>& protected_inputs) {
  RefuseToReplaceInput(path, protected_inputs);
  static std::atomic<unsigned> counter{0};
  const std::string temporary =
      path + ".tmp-" + std::to_string(::getpid()) + "-" + std::to_string(counter.fetch_add(1));
  auto fail = [&](const char* what, int error_number) {
    ::unlink(temporary.c_str());
    throw std::runtime_error(path + ": cannot " + what + ": " + std::strerror(error_number));
  };
  const int fd = ::open(temporary.c_str(), O_WRONLY | O_CREAT | O_EXCL | O_CLOEXEC, 0644);
  if (fd < 0) {
    throw std::runtime_error(path +
                             ": cannot create a temporary file beside it: " + std::strerror(errno));
  }
  std::size_t written = 0;
  while (written < bytes.size()) {
    const ssize_t n = ::write(fd, bytes.data() + written, bytes.size() - written);
    if (n < 0) {
      if (errno == EINTR) continue;
      const int e = errno;
      ::close(fd);
      fail("write", e);
    }
    written += static_cast<std::size_t>(n);
  }
  if (::fsync(fd) != 0) {
    const int e = errno;
    ::close(fd);
    fail("flush to disk", e);
  }
  if (::close(fd) != 0) fail("close", errno);
  if (std::rename(temporary.c_str(), path.c_str()) != 0) fail("rename into place", errno);
}

}  // namespace ratewell
