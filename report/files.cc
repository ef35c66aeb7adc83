#include "report/files.h"

#include <QCryptographicHash>
#include <QFile>

#include <stdexcept>

namespace ratewell {

std::string Sha256OfFile(const std::string& path) {
  QFile file(QString::fromStdString(path));
  if (!file.open(QIODevice::ReadOnly)) {
    throw std::runtime_error(path + ": cannot be read to compute its SHA-256: " +
                             file.errorString().toStdString());
  }
  QCryptographicHash hash(QCryptographicHash::Sha256);
  if (!hash.addData(&file)) {
    throw std::runtime_error(path + ": read error while computing its SHA-256");
  }
  return hash.result().toHex().toStdString();
}

std::string Sha256OfBytes(std::string_view bytes) {
  return QCryptographicHash::hash(QByteArrayView(bytes.data(), static_cast<qsizetype>(bytes.size())),
                                  QCryptographicHash::Sha256)
      .toHex()
      .toStdString();
}

}  // namespace ratewell
