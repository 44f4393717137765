# Run by `cmake --install` (see the top-level CMakeLists.txt): installs the example systemd units of
# tools/systemd with ExecStart pointing at the program as installed under the install-time prefix.
# Expects COUNTERSIGN_UNIT_SOURCE_DIR, COUNTERSIGN_UNIT_DIR (relative to the prefix, or absolute),
# COUNTERSIGN_BINDIR (relative to the prefix) and COUNTERSIGN_UNIT_WORK_DIR (a scratch folder).
set(_unit_dir "${COUNTERSIGN_UNIT_DIR}")
if(NOT IS_ABSOLUTE "${_unit_dir}")
  set(_unit_dir "${CMAKE_INSTALL_PREFIX}/${_unit_dir}")
endif()
foreach(_unit countersign-watch.service countersign-receive.service)
  file(READ "${COUNTERSIGN_UNIT_SOURCE_DIR}/${_unit}" _text)
  string(REPLACE "/usr/local/bin/countersign" "${CMAKE_INSTALL_PREFIX}/${COUNTERSIGN_BINDIR}/countersign" _text
                 "${_text}")
  file(WRITE "${COUNTERSIGN_UNIT_WORK_DIR}/${_unit}" "${_text}")
  file(INSTALL DESTINATION "${_unit_dir}" TYPE FILE PERMISSIONS OWNER_READ OWNER_WRITE GROUP_READ WORLD_READ
       FILES "${COUNTERSIGN_UNIT_WORK_DIR}/${_unit}")
endforeach()
