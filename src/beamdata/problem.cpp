#include <countersign/beamdata/problem.hpp>

#include <algorithm>
#include <set>
#include <tuple>

namespace countersign::beamdata {

namespace {
std::string location(const Problem& p) {
  std::string where;
  if (p.line) where = "line " + std::to_string(*p.line);
  if (p.row) where = "row " + std::to_string(*p.row);
  if (p.column) where += (where.empty() ? "" : ", ") + std::string{"column "} + std::to_string(*p.column);
  return where;
}

// "5", "5-18", "2, 4, 7-9": sorted values with runs of consecutive numbers joined.
std::string ranges(const std::set<std::size_t>& values) {
  std::string out;
  auto it = values.begin();
  while (it != values.end()) {
    const std::size_t first = *it;
    std::size_t last = first;
    for (++it; it != values.end() && *it == last + 1; ++it) last = *it;
    if (!out.empty()) out += ", ";
    out += std::to_string(first);
    if (last != first) out += "-" + std::to_string(last);
  }
  return out;
}

// Where the members of a group are: the rows and columns when they fill a rectangle, else a list
// of positions (at most eight, then a count).
std::string positions(const std::vector<Problem>& members) {
  std::set<std::size_t> rows, columns, lines;
  std::set<std::pair<std::size_t, std::size_t>> cells;
  for (const auto& p : members) {
    if (p.line) lines.insert(*p.line);
    if (p.row) rows.insert(*p.row);
    if (p.column) columns.insert(*p.column);
    if (p.row && p.column) cells.insert({*p.row, *p.column});
  }
  if (!lines.empty() && rows.empty()) return (lines.size() == 1 ? "line " : "lines ") + ranges(lines);
  if (rows.empty()) return {};
  const bool rectangle = columns.empty() || cells.size() == rows.size() * columns.size();
  if (rectangle) {
    std::string out = (rows.size() == 1 ? "row " : "rows ") + ranges(rows);
    if (!columns.empty()) out += (columns.size() == 1 ? ", column " : ", columns ") + ranges(columns);
    return out;
  }
  std::string out;
  std::size_t shown = 0;
  for (const auto& [row, column] : cells) {
    if (shown == 8) break;
    out += (shown++ == 0 ? "" : "; ") + std::string{"row "} + std::to_string(row) + " column " +
           std::to_string(column);
  }
  if (cells.size() > shown) out += "; and " + std::to_string(cells.size() - shown) + " more";
  return out;
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

std::string ProblemGroup::text() const {
  const Problem& first = members.front();
  if (members.size() == 1) return first.text();
  std::string out = first.file.empty() ? std::string{} : first.file + ": ";
  if (first.severity == Severity::warning) out += "warning: ";
  if (!first.key.empty()) out += first.key + ": ";
  const bool cells = std::any_of(members.begin(), members.end(), [](const Problem& p) { return p.column; });
  out += first.rule + ": " + std::to_string(members.size()) + (cells ? " cells" : " findings");
  const std::string where = positions(members);
  if (!where.empty()) out += ": " + where;
  const std::string first_where = location(first);
  out += " (first: " + (first_where.empty() ? std::string{} : first_where + ": ") + first.message + ")";
  return out;
}

std::vector<ProblemGroup> group_problems(const std::vector<Problem>& problems) {
  std::vector<ProblemGroup> groups;
  for (const auto& p : problems) {
    auto same = std::find_if(groups.begin(), groups.end(), [&](const ProblemGroup& g) {
      const Problem& f = g.members.front();
      return !p.rule.empty() &&
             std::tie(f.file, f.key, f.severity, f.rule) == std::tie(p.file, p.key, p.severity, p.rule);
    });
    if (same == groups.end()) {
      groups.push_back(ProblemGroup{{p}});
    } else {
      same->members.push_back(p);
    }
  }
  return groups;
}

}  // namespace countersign::beamdata
