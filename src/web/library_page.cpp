// The beam-data library the server was started with: its SHA-256, machines and beams, and when the
// history saw each library (the checks computed with it).

#include <countersign/web/pages.hpp>

#include "page_parts.hpp"

#include <algorithm>
#include <map>

namespace countersign::web {

namespace {

std::string machine_section(const beamdata::Machine& m) {
  std::string html = "<h2>" + parts::esc(m.name) + "</h2>";
  if (!m.aliases.empty()) {
    std::string aliases;
    for (const auto& a : m.aliases) aliases += (aliases.empty() ? "" : ", ") + parts::esc(a);
    html += "<p>Also answers to: " + aliases + "</p>";
  }
  html +=
      "<table class=\"beams\"><thead><tr><th>Beam</th><th>Radiation</th><th>Energy</th><th>Wedges</th>"
      "<th>Trays</th><th>Off-axis table</th></tr></thead><tbody>";
  for (const auto& b : m.beams) {
    std::string wedges;
    for (const auto& w : b.wedges) wedges += (wedges.empty() ? "" : ", ") + parts::esc(w.id);
    std::string trays;
    for (const auto& t : b.trays) trays += (trays.empty() ? "" : ", ") + parts::esc(t.id);
    html += "<tr><td>" + parts::esc(b.id) + "</td><td>" + parts::esc(b.radiation) + "</td><td>" +
            parts::energy_text(b.energy_mv) + "</td><td>";
    html += wedges;
    html += "</td><td>";
    html += trays;
    html += std::string{"</td><td>"} + (b.oar ? "yes" : "no") + "</td></tr>";
  }
  for (const auto& e : m.electron_beams) {
    std::string applicators;
    for (const auto& a : e.applicators) applicators += (applicators.empty() ? "" : ", ") + parts::esc(a.id);
    html += "<tr><td>" + parts::esc(e.id) + "</td><td>ELECTRON</td><td>" + parts::fixed(e.energy_mev, 1) +
            " MeV</td><td colspan=\"3\">applicators: " + applicators + "</td></tr>";
  }
  return html + "</tbody></table>";
}

std::string uses_section(const std::vector<LibraryUse>& uses, const std::string& current) {
  std::string html = "<h2>Libraries in the history</h2>";
  if (uses.empty()) return html + "<p>No check recorded yet.</p>";
  html +=
      "<table id=\"library-uses\"><thead><tr><th>SHA-256</th><th>First check</th><th>Last check</th>"
      "<th class=\"num\">Checks</th><th></th></tr></thead><tbody>";
  for (const auto& u : uses) {
    html += "<tr><td class=\"hash\">" + parts::esc(u.sha256) + "</td><td>" +
            parts::time_text(u.first_used_utc) + "</td><td>" + parts::time_text(u.last_used_utc) +
            "</td><td class=\"num\">" + std::to_string(u.checks) + "</td><td>" +
            (u.sha256 == current ? "in use here" : "") + "</td></tr>";
  }
  return html +
         "</tbody></table><p>A new line starts when the library changed: the first check computed "
         "with it dates the change.</p>";
}

}  // namespace

std::vector<LibraryUse> library_uses(const std::vector<store::CheckRecord>& checks) {
  std::map<std::string, LibraryUse> by_hash;
  for (const auto& c : checks) {
    auto& use = by_hash[c.hashes.beamdata_sha256];
    use.sha256 = c.hashes.beamdata_sha256;
    if (use.checks == 0 || c.checked_at_utc < use.first_used_utc) use.first_used_utc = c.checked_at_utc;
    if (use.checks == 0 || c.checked_at_utc > use.last_used_utc) use.last_used_utc = c.checked_at_utc;
    ++use.checks;
  }
  std::vector<LibraryUse> uses;
  uses.reserve(by_hash.size());
  for (auto& [hash, use] : by_hash) uses.push_back(std::move(use));
  std::sort(uses.begin(), uses.end(),
            [](const LibraryUse& a, const LibraryUse& b) { return a.first_used_utc > b.first_used_utc; });
  return uses;
}

std::string library_page(const Expected<beamdata::Library>& library, const std::vector<LibraryUse>& uses,
                         const Viewer& viewer) {
  std::string body;
  if (!library) {
    body += "<p class=\"problem\">The beam-data library cannot be read: " +
            parts::esc(library.error().message()) + "</p>";
    return page("Beam data", viewer, body + uses_section(uses, ""));
  }
  const auto& lib = library.value();
  body += "<table id=\"library\"><tbody><tr><th>Folder</th><td>" + parts::esc(lib.root.string()) +
          "</td></tr><tr><th>SHA-256</th><td class=\"hash\" id=\"library-sha256\">" +
          parts::esc(lib.sha256_hex) + "</td></tr><tr><th>Machines</th><td>" +
          std::to_string(lib.machines.size()) + "</td></tr></tbody></table>";
  if (!lib.warnings.empty())
    body += "<p class=\"notice\">The library has " + std::to_string(lib.warnings.size()) +
            " finding(s) that do not stop its use; see <code>countersign beamdata validate</code>.</p>";
  for (const auto& m : lib.machines) body += machine_section(m);
  return page("Beam data", viewer, body + uses_section(uses, lib.sha256_hex));
}

}  // namespace countersign::web
