// fuzz_main.cpp — a stand-in for libFuzzer's main: runs LLVMFuzzerTestOneInput once per
// file named on the command line (directories: every regular file inside, sorted).
//
// Used by the ordinary (GCC, and ASan+UBSan) builds, where each fuzz target becomes a
// CTest test over its seed inputs and the crashers kept in tests/regression/<target>/,
// so a crash found by tools/fuzz stays fixed. A missing path is skipped (no regression
// inputs yet). Exit 0 when every input ran; a failed check aborts.
#include <algorithm>
#include <cstddef>
#include <cstdint>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <iterator>
#include <string>
#include <vector>

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size);

namespace {

void RunFile(const std::filesystem::path& path, int* runs) {
  std::ifstream in(path, std::ios::binary);
  const std::string bytes((std::istreambuf_iterator<char>(in)), std::istreambuf_iterator<char>());
  // A copy in its own allocation, so ASan sees reads past the end.
  std::vector<std::uint8_t> data(bytes.begin(), bytes.end());
  LLVMFuzzerTestOneInput(data.data(), data.size());
  ++*runs;
}

}  // namespace

int main(int argc, char** argv) {
  int runs = 0;
  for (int i = 1; i < argc; ++i) {
    const std::filesystem::path path(argv[i]);
    std::error_code ec;
    if (std::filesystem::is_directory(path, ec)) {
      std::vector<std::filesystem::path> files;
      for (const auto& entry : std::filesystem::directory_iterator(path, ec)) {
        if (entry.is_regular_file()) files.push_back(entry.path());
      }
      std::sort(files.begin(), files.end());
      for (const auto& f : files) RunFile(f, &runs);
    } else if (std::filesystem::is_regular_file(path, ec)) {
      RunFile(path, &runs);
    }
  }
  std::printf("%s: %d inputs ran\n", argc > 0 ? argv[0] : "fuzz", runs);
  return 0;
}
