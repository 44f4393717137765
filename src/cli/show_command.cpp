// `countersign show PLAN.dcm...`: what the plan says, beam by beam, or the plan model as JSON.

#include <countersign/cli/commands.hpp>
#include <countersign/dicom/read_plan.hpp>
#include <countersign/report/json_text.hpp>
#include <countersign/report/plan_json.hpp>
#include <countersign/util/text.hpp>

#include "bundled_data.hpp"

#include <fmt/format.h>

#include <memory>
#include <ostream>
#include <string>
#include <vector>

namespace countersign::cli {

namespace {

struct ShowOptions {
  std::vector<std::string> paths;
  bool json = false;
};

// A value from the plan on one terminal line: "-" when absent, control characters escaped.
std::string or_dash(const std::string& text) { return text.empty() ? "-" : escape_control_characters(text); }
template <class Term>
std::string or_dash(const plan::Coded<Term>& coded) {
  return or_dash(coded.text);
}

std::string number_or_dash(const std::optional<double>& value, int decimals) {
  return value ? fmt::format("{:.{}f}", *value, decimals) : "-";
}

std::string jaws_text(const plan::ControlPoint& cp) {
  auto pair = [&cp](plan::DeviceType a, plan::DeviceType b) -> std::string {
    for (const plan::DeviceType type : {a, b}) {
      const auto* device = cp.device(type);
      if (device != nullptr && device->positions_mm.size() == 2) {
        return fmt::format("{:.1f}/{:.1f}", device->positions_mm[0], device->positions_mm[1]);
      }
    }
    return "-/-";
  };
  return pair(plan::DeviceType::x, plan::DeviceType::asymx) + " " +
         pair(plan::DeviceType::y, plan::DeviceType::asymy);
}

const plan::ReferencedBeam* find_reference(const plan::Plan& plan, int beam_number, int& group_number) {
  for (const auto& group : plan.fraction_groups) {
    for (const auto& ref : group.beams) {
      if (ref.beam_number == beam_number) {
        group_number = group.number;
        return &ref;
      }
    }
  }
  return nullptr;
}

void print_summary(const plan::Plan& plan, std::ostream& out) {
  out << fmt::format("{}\n", escape_control_characters(plan.source_file));
  out << fmt::format("  Plan {} ({}), approval {}, SOP Instance UID {}\n", or_dash(plan.label),
                     or_dash(plan.name), or_dash(plan.approval_status), or_dash(plan.sop_instance_uid));
  out << fmt::format("  Patient {} ({})\n", or_dash(plan.patient_id), or_dash(plan.patient_name));
  if (!plan.specific_character_set.empty())
    out << fmt::format("  Specific Character Set {}\n", or_dash(plan.specific_character_set));
  for (const auto& warning : plan.warnings)
    out << "  Warning: " << escape_control_characters(warning) << "\n";
  for (const auto& group : plan.fraction_groups) {
    out << fmt::format("  Fraction group {}: {} fractions, {} beams\n", group.number,
                       group.fractions_planned ? std::to_string(*group.fractions_planned) : "-",
                       group.beams.size());
  }
  for (const auto& ref : plan.dose_references) {
    out << fmt::format("  Dose reference {}: {} {} {}{}\n", ref.number, or_dash(ref.description),
                       or_dash(ref.type), or_dash(ref.structure_type),
                       ref.point_mm ? fmt::format(" at ({:.1f}, {:.1f}, {:.1f}) mm", (*ref.point_mm)[0],
                                                  (*ref.point_mm)[1], (*ref.point_mm)[2])
                                    : "");
  }
  out << fmt::format(
      "  {:>4} {:<14} {:<13} {:<9} {:<8} {:>6} {:>6} {:>6} {:>6} {:>8} {:<26} {:>4} {:<9} {:>4} {:>8} {:>7} "
      "{:>9}\n",
      "Beam", "Name", "Machine", "Delivery", "Type", "MV", "Gantry", "Coll", "Couch", "SSD mm",
      "Jaws X1/X2 Y1/Y2 mm", "MLC", "Wedge", "CPs", "MU", "Dose Gy", "Depth mm");
  for (const auto& beam : plan.beams) {
    const plan::ControlPoint* cp = beam.control_points.empty() ? nullptr : &beam.control_points.front();
    int group_number = 0;
    const plan::ReferencedBeam* ref = find_reference(plan, beam.number, group_number);
    int mlc_pairs = 0;
    for (const auto& d : beam.beam_limiting_devices) {
      if (d.type == plan::DeviceType::mlcx || d.type == plan::DeviceType::mlcy) mlc_pairs = d.pair_count;
    }
    std::string wedges;
    for (const auto& w : beam.wedges) wedges += (wedges.empty() ? "" : ",") + or_dash(w.id);
    std::optional<double> depth_mm;
    if (ref != nullptr) {
      depth_mm = ref->distances_in_referenced_beam.depth_mm
                     ? ref->distances_in_referenced_beam.depth_mm
                     : ref->distances_in_verification_sequence.depth_mm;
    }
    if (!depth_mm && !beam.dose_references.empty())
      depth_mm = beam.dose_references.front().distances.depth_mm;
    out << fmt::format(
        "  {:>4} {:<14} {:<13} {:<9} {:<8} {:>6} {:>6} {:>6} {:>6} {:>8} {:<26} {:>4} {:<9} {:>4} {:>8} "
        "{:>7} {:>9}\n",
        beam.number, or_dash(beam.name), or_dash(beam.machine_name), or_dash(beam.delivery_type),
        or_dash(beam.radiation_type), cp ? number_or_dash(cp->nominal_energy_mv, 0) : "-",
        cp ? number_or_dash(cp->gantry_deg, 1) : "-", cp ? number_or_dash(cp->collimator_deg, 1) : "-",
        cp ? number_or_dash(cp->couch_deg, 1) : "-", cp ? number_or_dash(cp->ssd_mm, 1) : "-",
        cp ? jaws_text(*cp) : "-", mlc_pairs == 0 ? std::string{"-"} : std::to_string(mlc_pairs),
        wedges.empty() ? "-" : wedges, beam.control_points.size(),
        ref ? number_or_dash(ref->meterset_mu, 2) : "-", ref ? number_or_dash(ref->dose_gy, 3) : "-",
        number_or_dash(depth_mm, 1));
  }
}

void run_show(const ShowOptions& options, CommandContext& context) {
  use_bundled_reader_dictionary();
  std::vector<plan::Plan> plans;
  for (const auto& path : options.paths) {
    auto plan = dicom::read_plan_file(path);
    if (!plan) {
      context.io.err << "countersign show: " << escape_control_characters(plan.error().message()) << "\n";
      context.exit_code = ExitCode::bad_input;
      continue;
    }
    plans.push_back(std::move(plan).value());
  }
  if (options.json) {
    if (options.paths.size() == 1) {
      if (!plans.empty()) context.io.out << report::json_text(report::plan_to_json(plans.front()));
    } else {
      nlohmann::json all = nlohmann::json::array();
      for (const auto& plan : plans) all.push_back(report::plan_to_json(plan));
      context.io.out << report::json_text(all);
    }
    return;
  }
  for (std::size_t i = 0; i < plans.size(); ++i) {
    if (i > 0) context.io.out << "\n";
    print_summary(plans[i], context.io.out);
  }
}

}  // namespace

void add_show_command(CLI::App& app, CommandContext& context) {
  auto options = std::make_shared<ShowOptions>();
  auto* command =
      app.add_subcommand("show", "Print what an RT Plan says, beam by beam (reads the plan only; no check)");
  command->add_option("plans", options->paths, "RT Plan files (DICOM)")->required();
  command->add_flag(
      "--json", options->json,
      "Print the plan model as JSON (one plan: an object; several: an array; keys in the README)");
  command->callback([options, &context] { run_show(*options, context); });
}

}  // namespace countersign::cli
