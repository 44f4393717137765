# Precompiled headers. Most of the build's time is the same third-party headers parsed again in
# every file (GoogleTest, nlohmann-json, CLI11, Eigen, fmt and the standard library: 5–15 s per file
# at -O2); precompiled once per target, they load in well under a second. The sources still include
# what they use: tools/tidy checks them without the precompiled header, so a missing include shows.
# COUNTERSIGN_PCH=OFF builds without them (the fuzz build, with clang, always does).
option(COUNTERSIGN_PCH "Precompile the heavy third-party headers once per target" ON)

set(COUNTERSIGN_PCH_STD <algorithm> <array> <chrono> <cmath> <filesystem> <fstream> <functional> <map>
                        <memory> <optional> <set> <sstream> <string> <string_view> <utility> <vector>)

# countersign_precompile(TARGET HEADER...): the standard headers above, fmt, and the headers named.
function(countersign_precompile target)
  if(COUNTERSIGN_PCH AND NOT COUNTERSIGN_BUILD_FUZZ)
    target_precompile_headers(${target} PRIVATE ${COUNTERSIGN_PCH_STD} <fmt/format.h> ${ARGN})
    # GCC 12 at -O2 reports -Warray-bounds and -Wstringop-overflow inside std::string's operator+
    # when libstdc++ comes from a precompiled header (false positives: seen here in three files that
    # build cleanly without one). Out-of-bounds access is still caught at run time by the sanitizer
    # pass, and at compile time by these warnings with COUNTERSIGN_PCH=OFF.
    if(CMAKE_CXX_COMPILER_ID STREQUAL "GNU" AND CMAKE_CXX_COMPILER_VERSION VERSION_LESS 13)
      target_compile_options(${target} PRIVATE -Wno-array-bounds -Wno-stringop-overflow)
    endif()
  endif()
endfunction()
