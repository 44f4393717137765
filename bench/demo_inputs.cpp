#include "demo_inputs.hpp"

#include <countersign/dicom/read_plan.hpp>

#include <cstdio>
#include <cstdlib>
#include <fstream>
#include <iterator>

namespace countersign::bench {

namespace {

[[noreturn]] void give_up(const std::string& message) {
  std::fprintf(stderr, "bench: %s\n", message.c_str());
  std::abort();
}

}  // namespace

std::filesystem::path source_dir() { return COUNTERSIGN_BENCH_SOURCE_DIR; }

std::filesystem::path demo_plan_path(const std::string& file_name) {
  return source_dir() / "testdata" / "plans" / file_name;
}

const beamdata::Library& demo_library() {
  static const beamdata::Library library = [] {
    auto loaded = beamdata::load_library(source_dir() / "beamdata");
    if (!loaded) give_up(loaded.error().message());
    return std::move(loaded).value();
  }();
  return library;
}

std::vector<std::byte> demo_plan_bytes(const std::string& file_name) {
  std::ifstream in(demo_plan_path(file_name), std::ios::binary);
  if (!in) give_up("cannot open " + demo_plan_path(file_name).string());
  const std::vector<char> chars{std::istreambuf_iterator<char>(in), std::istreambuf_iterator<char>()};
  std::vector<std::byte> bytes(chars.size());
  for (std::size_t i = 0; i < chars.size(); ++i) bytes[i] = static_cast<std::byte>(chars[i]);
  return bytes;
}

plan::Plan demo_plan(const std::string& file_name) {
  auto plan = dicom::read_plan_file(demo_plan_path(file_name));
  if (!plan) give_up(plan.error().message());
  return std::move(plan).value();
}

}  // namespace countersign::bench
