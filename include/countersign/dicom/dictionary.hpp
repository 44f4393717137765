#pragma once

// The DICOM data dictionary the reader uses. DCMTK loads its whole dictionary (some 8 000 public and
// private attributes) the first time a process reads any DICOM object, which costs a one-shot command
// more than reading the plan. The build writes a small dictionary of exactly the attributes this
// reader reads (share/countersign/dicom/reader.dic, cmake/make_reader_dictionary.cmake); a command
// that only reads plans points DCMTK at it before reading the first one.

#include <filesystem>

namespace countersign::dicom {

// Makes DCMTK load `dictionary_file` instead of its own dictionaries, for the rest of this process.
// Does nothing, and returns false, when the user set DCMDICTPATH (theirs wins) or the file is
// absent (DCMTK's own dictionary is used, correct but slower). Call before any DICOM object is read
// and before other threads start: DCMTK reads the setting once, from the environment.
bool use_reader_dictionary(const std::filesystem::path& dictionary_file);

}  // namespace countersign::dicom
