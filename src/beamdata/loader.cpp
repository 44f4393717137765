#include "csv_reader.hpp"
#include "inspection.hpp"

#include <countersign/beamdata/sha256.hpp>

#include <toml++/toml.h>

#include <algorithm>
#include <cmath>
#include <fstream>
#include <initializer_list>
#include <optional>
#include <sstream>
#include <string_view>

namespace countersign::beamdata::detail {

namespace {

namespace fs = std::filesystem;

std::optional<std::string> read_file(const fs::path& file) {
  std::ifstream in(file, std::ios::binary);
  if (!in) return std::nullopt;
  std::ostringstream text;
  text << in.rdbuf();
  if (in.bad()) return std::nullopt;
  return text.str();
}

// Manifests of a library folder, or the folder itself when it is a machine folder; sorted by
// folder name so that the fingerprint does not depend on directory order.
std::vector<fs::path> machine_folders(const fs::path& folder) {
  if (fs::is_regular_file(folder / "machine.toml")) return {folder};
  std::vector<fs::path> folders;
  std::error_code ec;
  for (const auto& entry : fs::directory_iterator(folder, ec)) {
    if (entry.is_directory() && fs::is_regular_file(entry.path() / "machine.toml"))
      folders.push_back(entry.path());
  }
  std::sort(folders.begin(), folders.end());
  return folders;
}

enum class Presence { required, optional };

// Reads the keys of one manifest, recording a problem (with the manifest line) for each bad key.
class ManifestReader {
 public:
  ManifestReader(std::string file, std::vector<Problem>& problems)
      : file_(std::move(file)), problems_(problems) {}

  void problem(const toml::node* where, std::string key, std::string message,
               Severity severity = Severity::error) {
    std::optional<std::size_t> line;
    if (where != nullptr && where->source().begin.line > 0) line = where->source().begin.line;
    problems_.push_back(
        Problem{file_, line, std::nullopt, std::nullopt, std::move(key), std::move(message), severity});
  }

  // A number in [min_value, max_value]; integers are accepted as numbers.
  std::optional<double> number(const toml::table& table, std::string_view key, const std::string& path,
                               double min_value, double max_value, Presence presence = Presence::required) {
    const toml::node* node = table.get(key);
    const std::string name = path + std::string{key};
    if (node == nullptr) {
      if (presence == Presence::required) problem(&table, name, "missing");
      return std::nullopt;
    }
    std::optional<double> value;
    if (const auto* f = node->as_floating_point()) value = f->get();
    if (const auto* i = node->as_integer()) value = static_cast<double>(i->get());
    if (!value) {
      problem(node, name, "not a number");
      return std::nullopt;
    }
    if (!std::isfinite(*value) || *value < min_value || *value > max_value) {
      std::ostringstream message;
      message << *value << " is outside the plausible range [" << min_value << ", " << max_value << "]";
      problem(node, name, message.str());
      return std::nullopt;
    }
    return value;
  }

  std::optional<std::string> text(const toml::table& table, std::string_view key, const std::string& path,
                                  Presence presence = Presence::required) {
    const toml::node* node = table.get(key);
    const std::string name = path + std::string{key};
    if (node == nullptr) {
      if (presence == Presence::required) problem(&table, name, "missing");
      return std::nullopt;
    }
    const auto* s = node->as_string();
    if (s == nullptr || s->get().empty()) {
      problem(node, name, "not a non-empty string");
      return std::nullopt;
    }
    return s->get();
  }

  const toml::table* sub_table(const toml::table& table, std::string_view key, const std::string& path) {
    const toml::node* node = table.get(key);
    if (node == nullptr || node->as_table() == nullptr) {
      problem(node != nullptr ? node : &table, path + std::string{key},
              node ? "not a table" : "missing table");
      return nullptr;
    }
    return node->as_table();
  }

  // Tables of an array of tables ([[beam]], [[beam.wedge]]); missing is an empty list.
  std::vector<const toml::table*> table_array(const toml::table& table, std::string_view key,
                                              const std::string& path) {
    std::vector<const toml::table*> result;
    const toml::node* node = table.get(key);
    if (node == nullptr) return result;
    const auto* array = node->as_array();
    if (array == nullptr) {
      problem(node, path + std::string{key}, "not an array of tables");
      return result;
    }
    for (const auto& element : *array) {
      if (const auto* t = element.as_table()) {
        result.push_back(t);
      } else {
        problem(&element, path + std::string{key}, "element is not a table");
      }
    }
    return result;
  }

  // A key the format does not know is most likely a typing error in an optional key (which would
  // otherwise be silently absent); reported as a warning so newer libraries still load.
  void unknown_keys(const toml::table& table, std::initializer_list<std::string_view> known,
                    const std::string& path) {
    for (const auto& [key, node] : table) {
      if (std::find(known.begin(), known.end(), key.str()) == known.end()) {
        problem(&node, path + std::string{key.str()}, "unknown key, ignored (misspelt?)", Severity::warning);
      }
    }
  }

  [[nodiscard]] const std::string& file() const { return file_; }

 private:
  std::string file_;
  std::vector<Problem>& problems_;
};

// Plausible ranges of manifest values (wide on purpose: they catch unit slips and typos, not
// clinical judgement; common practice, no source).
constexpr double min_distance_cm = 50.0, max_distance_cm = 200.0;

// Reads the tables of one machine; keeps the fingerprint records in manifest order.
class MachineLoader {
 public:
  MachineLoader(const fs::path& machine_folder, const fs::path& manifest_path, Inspection& inspection,
                Sha256& hash)
      : folder_(machine_folder),
        fingerprint_name_(fingerprint_name(machine_folder)),
        inspection_(inspection),
        hash_(hash),
        reader_(manifest_path.string(), inspection.problems) {}

  // Adds one file to the fingerprint: "<machine folder>/<path>\n<size>\n<bytes>".
  void fingerprint(const std::string& relative, const std::string& bytes) {
    hash_.update(fingerprint_name_ + "/" + relative + "\n" + std::to_string(bytes.size()) + "\n");
    hash_.update(bytes);
  }

  std::optional<std::string> table_text(const std::string& relative, const toml::node* where,
                                        const std::string& key) {
    const fs::path path = folder_ / relative;
    if (!fs::is_regular_file(path)) {
      reader_.problem(where, key, "names '" + relative + "', which does not exist in " + folder_.string());
      return std::nullopt;
    }
    auto bytes = read_file(path);
    if (!bytes) {
      reader_.problem(where, key, "cannot read '" + relative + "'");
      return std::nullopt;
    }
    fingerprint(relative, *bytes);
    return bytes;
  }

  std::optional<Table2D> table2d(const toml::table& tables, std::string_view key, const std::string& path,
                                 const std::string& quantity, const std::string& column_axis,
                                 Presence presence) {
    const auto relative = reader_.text(tables, key, path, presence);
    if (!relative) return std::nullopt;
    const auto text = table_text(*relative, tables.get(key), path + std::string{key});
    if (!text) return std::nullopt;
    const TableSource source{(folder_ / *relative).string(), *relative, quantity};
    Read2D read = parse_table2d(*text, source, "depth_cm", column_axis, inspection_.problems);
    inspection_.lines[source.problem_file] = TableLines{read.header_line, read.row_lines};
    return std::move(read.table);
  }

  std::optional<Table1D> table1d(const toml::table& tables, std::string_view key, const std::string& path,
                                 const std::string& quantity) {
    const auto relative = reader_.text(tables, key, path);
    if (!relative) return std::nullopt;
    const auto text = table_text(*relative, tables.get(key), path + std::string{key});
    if (!text) return std::nullopt;
    const TableSource source{(folder_ / *relative).string(), *relative, quantity};
    Read1D read = parse_table1d(*text, source, inspection_.problems);
    inspection_.lines[source.problem_file] = TableLines{read.header_line, read.row_lines};
    return std::move(read.table);
  }

  std::optional<WedgeData> wedge(const toml::table& t, const std::string& path) {
    WedgeData w;
    bool complete = true;
    reader_.unknown_keys(t, {"id", "angle_deg", "kind", "factor", "table"}, path);
    const auto id = reader_.text(t, "id", path);
    const auto angle = reader_.number(t, "angle_deg", path, 1.0, 89.0);
    const auto kind = reader_.text(t, "kind", path);
    complete = id && angle && kind;
    if (kind && *kind != "PHYSICAL" && *kind != "DYNAMIC") {
      reader_.problem(t.get("kind"), path + "kind", "'" + *kind + "' is neither PHYSICAL nor DYNAMIC");
      complete = false;
    }
    const bool has_factor = t.get("factor") != nullptr;
    const bool has_table = t.get("table") != nullptr;
    if (has_factor == has_table) {
      reader_.problem(&t, path + "factor", "give exactly one of 'factor' and 'table'");
      return std::nullopt;
    }
    if (has_factor) {
      w.factor = reader_.number(t, "factor", path, 0.1, 1.0);
      complete = complete && w.factor.has_value();
    } else {
      w.table = table2d(t, "table", path, "wedge_factor", "field_cm", Presence::required);
      complete = complete && w.table.has_value();
    }
    if (!complete) return std::nullopt;
    w.id = *id;
    w.angle_deg = *angle;
    w.kind = *kind == "PHYSICAL" ? WedgeKind::physical : WedgeKind::dynamic;
    return w;
  }

  std::optional<BeamData> beam(const toml::table& t, const std::string& path) {
    BeamData b;
    const auto id = reader_.text(t, "id", path);
    const auto radiation = reader_.text(t, "radiation", path);
    if (radiation && *radiation != "PHOTON") {
      // Other radiation types are for later versions: the beam is left out, so plans using it are
      // "not checked" (unknown radiation), never computed with photon physics.
      reader_.problem(t.get("radiation"), path + "radiation",
                      "'" + *radiation + "' beams are not supported yet; beam left out of the library",
                      Severity::warning);
      return std::nullopt;
    }
    reader_.unknown_keys(t,
                         {"id", "radiation", "energy_mv", "dmax_cm", "pdd_ssd_cm", "mlc_transmission",
                          "calibration", "tables", "wedge", "tray"},
                         path);
    const auto energy = reader_.number(t, "energy_mv", path, 0.5, 50.0);
    const auto dmax = reader_.number(t, "dmax_cm", path, 0.2, 6.0);
    const auto pdd_ssd = reader_.number(t, "pdd_ssd_cm", path, min_distance_cm, max_distance_cm);
    b.mlc_transmission = reader_.number(t, "mlc_transmission", path, 0.0, 0.1, Presence::optional);
    bool complete = id && radiation && energy && dmax && pdd_ssd;
    if (t.get("mlc_transmission") != nullptr && !b.mlc_transmission) complete = false;

    if (const auto* cal = reader_.sub_table(t, "calibration", path)) {
      const std::string cal_path = path + "calibration.";
      reader_.unknown_keys(*cal, {"output_cgy_per_mu", "field_cm", "ssd_cm", "depth_cm"}, cal_path);
      const auto output = reader_.number(*cal, "output_cgy_per_mu", cal_path, 0.1, 5.0);
      const auto field = reader_.number(*cal, "field_cm", cal_path, 1.0, 50.0);
      const auto ssd = reader_.number(*cal, "ssd_cm", cal_path, min_distance_cm, max_distance_cm);
      const auto depth = reader_.number(*cal, "depth_cm", cal_path, 0.0, 40.0);
      if (output && field && ssd && depth) {
        b.calibration = Calibration{*output, *field, *ssd, *depth};
      } else {
        complete = false;
      }
    } else {
      complete = false;
    }

    if (const auto* tables = reader_.sub_table(t, "tables", path)) {
      const std::string tables_path = path + "tables.";
      reader_.unknown_keys(*tables, {"pdd", "tmr", "sc", "sp", "oar"}, tables_path);
      auto pdd = table2d(*tables, "pdd", tables_path, "pdd", "field_cm", Presence::required);
      auto tmr = table2d(*tables, "tmr", tables_path, "tmr", "field_cm", Presence::required);
      auto sc = table1d(*tables, "sc", tables_path, "sc");
      auto sp = table1d(*tables, "sp", tables_path, "sp");
      b.oar = table2d(*tables, "oar", tables_path, "oar", "off_axis_cm", Presence::optional);
      if (tables->get("oar") != nullptr && !b.oar) complete = false;
      if (pdd && tmr && sc && sp) {
        b.pdd = std::move(*pdd);
        b.tmr = std::move(*tmr);
        b.sc = std::move(*sc);
        b.sp = std::move(*sp);
      } else {
        complete = false;
      }
    } else {
      complete = false;
    }

    const auto wedges = reader_.table_array(t, "wedge", path);
    for (std::size_t i = 0; i < wedges.size(); ++i) {
      auto w = wedge(*wedges[i], path + "wedge[" + std::to_string(i + 1) + "].");
      if (!w) {
        complete = false;
        continue;
      }
      if (b.wedge(w->id) != nullptr) {
        reader_.problem(wedges[i], path + "wedge", "wedge id '" + w->id + "' appears twice");
        complete = false;
      }
      b.wedges.push_back(std::move(*w));
    }
    const auto trays = reader_.table_array(t, "tray", path);
    for (std::size_t i = 0; i < trays.size(); ++i) {
      const std::string tray_path = path + "tray[" + std::to_string(i + 1) + "].";
      reader_.unknown_keys(*trays[i], {"id", "factor"}, tray_path);
      const auto tray_id = reader_.text(*trays[i], "id", tray_path);
      const auto factor = reader_.number(*trays[i], "factor", tray_path, 0.5, 1.0);
      if (!tray_id || !factor) {
        complete = false;
        continue;
      }
      if (b.tray(*tray_id) != nullptr) {
        reader_.problem(trays[i], path + "tray", "tray id '" + *tray_id + "' appears twice");
        complete = false;
      }
      b.trays.push_back(TrayData{*tray_id, *factor});
    }

    if (!complete) return std::nullopt;
    b.id = *id;
    b.radiation = *radiation;
    b.energy_mv = *energy;
    b.dmax_cm = *dmax;
    b.pdd_ssd_cm = *pdd_ssd;
    return b;
  }

  // The whole machine, or nothing when something is missing (the problems say what).
  std::optional<Machine> machine(const toml::table& manifest, const fs::path& manifest_path) {
    Machine m;
    m.manifest = manifest_path;
    reader_.unknown_keys(manifest, {"machine", "sad_cm", "beam"}, "");
    const auto name = reader_.text(manifest, "machine", "");
    const auto sad = reader_.number(manifest, "sad_cm", "", min_distance_cm, max_distance_cm);
    bool complete = name && sad;
    const auto beams = reader_.table_array(manifest, "beam", "");
    if (beams.empty()) {
      reader_.problem(&manifest, "beam", "the manifest defines no [[beam]]");
      complete = false;
    }
    for (std::size_t i = 0; i < beams.size(); ++i) {
      const std::string path = "beam[" + std::to_string(i + 1) + "].";
      auto b = beam(*beams[i], path);
      if (!b) {
        // A left-out beam type is a warning only; anything else leaves the machine incomplete.
        const bool only_left_out = [&] {
          const auto* r = beams[i]->get("radiation");
          return r != nullptr && r->as_string() != nullptr && r->as_string()->get() != "PHOTON";
        }();
        if (!only_left_out) complete = false;
        continue;
      }
      for (const auto& other : m.beams) {
        if (other.radiation == b->radiation && std::abs(other.energy_mv - b->energy_mv) < 0.01) {
          reader_.problem(beams[i], path + "energy_mv",
                          "beams '" + other.id + "' and '" + b->id + "' have the same radiation and energy");
          complete = false;
        }
      }
      m.beams.push_back(std::move(*b));
    }
    if (!complete) return std::nullopt;
    m.name = *name;
    m.sad_cm = *sad;
    return m;
  }

 private:
  // The machine folder's own name, however the user spelt the path ("dir/", ".", "../x").
  static std::string fingerprint_name(const fs::path& folder) {
    std::error_code ec;
    const fs::path canonical = fs::weakly_canonical(folder, ec);
    const fs::path named = ec ? folder.lexically_normal() : canonical;
    return (named.has_filename() ? named.filename() : named.parent_path().filename()).generic_string();
  }

  fs::path folder_;
  std::string fingerprint_name_;
  Inspection& inspection_;
  Sha256& hash_;
  ManifestReader reader_;
};

}  // namespace

std::string problem_path(const Machine& machine, const std::string& table_file) {
  return (machine.manifest.parent_path() / table_file).string();
}

Inspection inspect_library(const fs::path& folder) {
  Inspection inspection;
  if (!fs::is_directory(folder)) {
    inspection.problems.push_back(
        Problem{folder.string(), std::nullopt, std::nullopt, std::nullopt, "", "not a folder"});
    return inspection;
  }
  const auto folders = machine_folders(folder);
  if (folders.empty()) {
    inspection.problems.push_back(Problem{folder.string(), std::nullopt, std::nullopt, std::nullopt, "",
                                          "no machine.toml here nor in any sub-folder"});
    return inspection;
  }
  Library library;
  library.root = folder;
  Sha256 hash;
  bool complete = true;
  for (const auto& machine_folder : folders) {
    const fs::path manifest_path = machine_folder / "machine.toml";
    ++inspection.machine_count;
    const auto text = read_file(manifest_path);
    if (!text) {
      inspection.problems.push_back(Problem{manifest_path.string(), std::nullopt, std::nullopt, std::nullopt,
                                            "", "cannot read the file"});
      complete = false;
      continue;
    }
    MachineLoader loader(machine_folder, manifest_path, inspection, hash);
    loader.fingerprint("machine.toml", *text);
    toml::table manifest;
    try {
      manifest = toml::parse(*text, manifest_path.string());
    } catch (const toml::parse_error& e) {
      inspection.problems.push_back(Problem{manifest_path.string(), e.source().begin.line, std::nullopt,
                                            std::nullopt, "",
                                            "not valid TOML: " + std::string{e.description()}});
      complete = false;
      continue;
    }
    auto machine = loader.machine(manifest, manifest_path);
    if (!machine) {
      complete = false;
      continue;
    }
    inspection.beam_count += machine->beams.size();
    if (library.machine(machine->name) != nullptr) {
      inspection.problems.push_back(Problem{manifest_path.string(), std::nullopt, std::nullopt, std::nullopt,
                                            "machine", "machine '" + machine->name + "' is defined twice"});
      complete = false;
    }
    library.machines.push_back(std::move(*machine));
  }
  inspection.sha256_hex = hash.hex_digest();
  library.sha256_hex = inspection.sha256_hex;
  inspection.complete = complete;
  inspection.library = std::move(library);
  return inspection;
}

}  // namespace countersign::beamdata::detail
