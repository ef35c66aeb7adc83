// Reading speed and memory of the plate importers.
//
// Target (issue "Plate files in"): a 1536-well x 120-read long CSV read at
// >= 200 MB/s on one core with peak heap use under 3x the file size. The
// file is generated in memory (invented data), so the figure measures the
// parser, not the disk. Peak heap is tracked by counting global new/delete.
#include <benchmark/benchmark.h>
#include <malloc.h>

#include <atomic>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <new>
#include <string>

#include "importers/read_plate.h"

namespace {

std::atomic<long> g_live_bytes{0};
std::atomic<long> g_peak_bytes{0};

void Track(void* p) {
  if (p == nullptr) return;
  const long now = g_live_bytes.fetch_add(static_cast<long>(malloc_usable_size(p))) +
                   static_cast<long>(malloc_usable_size(p));
  long peak = g_peak_bytes.load();
  while (now > peak && !g_peak_bytes.compare_exchange_weak(peak, now)) {
  }
}

}  // namespace

void* operator new(std::size_t size) {
  void* p = std::malloc(size == 0 ? 1 : size);
  if (p == nullptr) throw std::bad_alloc();
  Track(p);
  return p;
}
void operator delete(void* p) noexcept {
  if (p == nullptr) return;
  g_live_bytes.fetch_sub(static_cast<long>(malloc_usable_size(p)));
  std::free(p);
}
void operator delete(void* p, std::size_t) noexcept { operator delete(p); }

namespace {

// 1536 wells x 120 reads every 15 s, one row per (well, time), A340 falling
// slowly from about 1.2. Rows sorted by time, then well, as readers write them.
std::string MakeLongCsv(int reads) {
  std::string csv = "Well,Time (s),A340\n";
  csv.reserve(static_cast<std::size_t>(1536) * reads * 20);
  char line[64];
  for (int read = 0; read < reads; ++read) {
    for (int well = 0; well < 1536; ++well) {
      const int row = well / 48;
      const int column = well % 48 + 1;
      char row_label[3] = {0, 0, 0};
      if (row < 26) {
        row_label[0] = static_cast<char>('A' + row);
      } else {
        row_label[0] = 'A';
        row_label[1] = static_cast<char>('A' + row - 26);
      }
      const double a = 1.2 - 0.0004 * read * (1 + well % 7) + 0.0001 * std::sin(well + read);
      const int n = std::snprintf(line, sizeof line, "%s%02d,%d,%.4f\n", row_label, column,
                                  read * 15, a);
      csv.append(line, static_cast<std::size_t>(n));
    }
  }
  return csv;
}

void BM_ReadLongCsv1536x120(benchmark::State& state) {
  const std::string csv = MakeLongCsv(120);
  ratewell::ReadOptions options;
  double peak_ratio = 0.0;
  for (auto _ : state) {
    const long before = g_live_bytes.load();
    g_peak_bytes.store(before);
    ratewell::Plate plate = ratewell::ReadPlateBytes(csv, "bench.csv", options);
    benchmark::DoNotOptimize(plate.series.data());
    peak_ratio = static_cast<double>(g_peak_bytes.load() - before) / static_cast<double>(csv.size());
  }
  state.SetBytesProcessed(static_cast<std::int64_t>(state.iterations()) *
                          static_cast<std::int64_t>(csv.size()));
  state.counters["file_MB"] = static_cast<double>(csv.size()) / 1e6;
  state.counters["peak_heap_per_file_byte"] = peak_ratio;
}
BENCHMARK(BM_ReadLongCsv1536x120)->Unit(benchmark::kMillisecond);

}  // namespace
