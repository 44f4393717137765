// libFuzzer harness for the beam-data loader. One input is a whole machine folder: its parts,
// separated by a line "@@@", become machine.toml and the tables the demo manifest names (see
// part_files); load_library must return a library or a clean Error, never crash or hang.
// Seeds are made from beamdata/FERN-LINAC-1 by tools/fuzz.

#include <countersign/beamdata/library.hpp>

#include <array>
#include <cstddef>
#include <cstdint>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <string>
#include <string_view>

namespace {

namespace fs = std::filesystem;

// Part i of an input is written to part_files[i]; extra parts are ignored.
constexpr std::array<std::string_view, 11> part_files = {
    "machine.toml", "6X/pdd.csv",  "6X/tmr.csv", "6X/sc.csv",  "6X/sp.csv",  "6X/oar.csv",
    "10X/pdd.csv",  "10X/tmr.csv", "10X/sc.csv", "10X/sp.csv", "10X/oar.csv"};
constexpr std::string_view separator = "\n@@@\n";

// One scratch folder per fuzzing process, removed at exit.
class ScratchFolder {
 public:
  ScratchFolder() {
    std::string pattern = (fs::temp_directory_path() / "countersign-fuzz-XXXXXX").string();
    if (::mkdtemp(pattern.data()) == nullptr) std::abort();
    root_ = pattern;
  }
  ~ScratchFolder() {
    std::error_code ec;
    fs::remove_all(root_, ec);
  }
  ScratchFolder(const ScratchFolder&) = delete;
  ScratchFolder& operator=(const ScratchFolder&) = delete;
  [[nodiscard]] const fs::path& root() const { return root_; }

 private:
  fs::path root_;
};

void write_parts(const fs::path& root, std::string_view input) {
  std::error_code ec;
  fs::remove_all(root / "FUZZ-LINAC", ec);
  const fs::path machine = root / "FUZZ-LINAC";
  fs::create_directories(machine / "6X");
  fs::create_directories(machine / "10X");
  for (const std::string_view file : part_files) {
    const std::size_t end = input.find(separator);
    std::ofstream out(machine / file, std::ios::binary);
    out << input.substr(0, end);
    if (end == std::string_view::npos) return;
    input.remove_prefix(end + separator.size());
  }
}

}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  static const ScratchFolder scratch;
  write_parts(scratch.root(), std::string_view{reinterpret_cast<const char*>(data), size});
  const auto library = countersign::beamdata::load_library(scratch.root());
  if (!library && library.error().message().empty()) std::abort();
  return 0;
}
