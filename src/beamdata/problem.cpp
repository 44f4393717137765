#include <countersign/beamdata/problem.hpp>

namespace countersign::beamdata {

namespace {
std::string location(const Problem& p) {
  std::string where;
  if (p.line) where = "line " + std::to_string(*p.line);
  if (p.row) where = "row " + std::to_string(*p.row);
  if (p.column) where += (where.empty() ? "" : ", ") + std::string{"column "} + std::to_string(*p.column);
  return where;
}
}  // namespace

std::string Problem::text() const {
  std::string out = file.empty() ? std::string{} : file + ": ";
  if (severity == Severity::warning) out += "warning: ";
  const std::string where = location(*this);
  if (!where.empty()) out += where + ": ";
  if (!key.empty()) out += key + ": ";
  return out + message;
}

Error Problem::to_error() const {
  // Error::message() then reads exactly like text(): "<file>: <place>: <key>: <message>".
  const std::string where = location(*this);
  if (where.empty()) return Error{ErrorKind::bad_beamdata, file, key, "", message};
  return Error{ErrorKind::bad_beamdata, file, where, "", key.empty() ? message : key + ": " + message};
}

}  // namespace countersign::beamdata
