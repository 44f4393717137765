#pragma once

// A stand-in for the checking pipeline, so the services are tested without the engine: a "plan" is
// a small text file, complete only when it ends with "END\n". The names, UIDs and patients are
// invented (Fernhollow Radiotherapy Unit demo scenario).

#include <countersign/service/plan_outcome.hpp>

#include <atomic>
#include <chrono>
#include <filesystem>
#include <fstream>
#include <map>
#include <memory>
#include <mutex>
#include <sstream>
#include <string>
#include <thread>
#include <vector>

namespace countersign::test {

struct FakeBeam {
  int number = 1;
  std::string machine = "FERN-LINAC-1";
  double energy_mv = 6.0;
  std::string technique = "isocentric";
  std::string verdict = "within_tolerance";
  double deviation_percent = 0.5;
};

inline std::string fake_plan_text(const std::string& uid, const std::string& patient_id,
                                  const std::vector<FakeBeam>& beams = {FakeBeam{}}) {
  std::ostringstream text;
  text << "FAKE-RTPLAN-1\nuid=" << uid << "\npatient=" << patient_id << "\n";
  for (const auto& beam : beams) {
    text << "beam=" << beam.number << "|" << beam.machine << "|" << beam.energy_mv << "|" << beam.technique
         << "|" << beam.verdict << "|" << beam.deviation_percent << "\n";
  }
  text << "END\n";
  return text.str();
}

inline void write_text(const std::filesystem::path& file, const std::string& text) {
  std::ofstream out(file, std::ios::binary);
  out << text;
}

// Counts how often each UID went through the processor (thread-safe).
struct ProcessorCalls {
  std::mutex mutex;
  std::map<std::string, int> by_uid;
  std::atomic<int> total{0};
  int count(const std::string& uid) {
    const std::scoped_lock lock{mutex};
    return by_uid.contains(uid) ? by_uid[uid] : 0;
  }
};

inline service::PlanProcessor fake_processor(std::shared_ptr<ProcessorCalls> calls = nullptr,
                                             std::chrono::milliseconds delay = std::chrono::milliseconds{0}) {
  return [calls, delay](const std::filesystem::path& file, std::span<const std::byte> bytes,
                        const service::StudyContext& /*study*/) -> Expected<service::PlanOutcome> {
    const std::string text{reinterpret_cast<const char*>(bytes.data()), bytes.size()};
    const std::string header = "FAKE-RTPLAN-1\n";
    if (text.compare(0, header.size(), header) != 0) {
      return Error{ErrorKind::not_dicom, file.string(), "", "",
                   "not a DICOM file (fake plan header missing)"};
    }
    if (text.size() < 4 || text.compare(text.size() - 4, 4, "END\n") != 0) {
      return Error{ErrorKind::truncated, file.string(), "", "", "the file ends inside an element"};
    }
    if (delay.count() > 0) std::this_thread::sleep_for(delay);
    service::PlanOutcome outcome;
    std::istringstream lines{text};
    std::string line;
    while (std::getline(lines, line)) {
      if (line.rfind("uid=", 0) == 0) outcome.sop_instance_uid = line.substr(4);
      if (line.rfind("patient=", 0) == 0) outcome.patient_id = line.substr(8);
      if (line.rfind("beam=", 0) == 0) {
        std::istringstream fields{line.substr(5)};
        std::string number, machine, energy, technique, verdict, deviation;
        std::getline(fields, number, '|');
        std::getline(fields, machine, '|');
        std::getline(fields, energy, '|');
        std::getline(fields, technique, '|');
        std::getline(fields, verdict, '|');
        std::getline(fields, deviation, '|');
        service::BeamOutcome beam;
        beam.beam_number = std::stoi(number);
        beam.beam_name = "Field " + number;
        beam.machine = machine;
        beam.energy_mv = std::stod(energy);
        beam.technique = technique;
        beam.verdict = service::beam_verdict_from_string(verdict).value_or(service::BeamVerdict::not_checked);
        if (beam.verdict == service::BeamVerdict::within_tolerance ||
            beam.verdict == service::BeamVerdict::outside_tolerance) {
          beam.deviation_percent = std::stod(deviation);
          beam.tolerance_percent = 5.0;
        } else {
          beam.reason = "unknown_machine";
        }
        outcome.beams.push_back(beam);
      }
    }
    if (outcome.sop_instance_uid.empty()) {
      return Error{ErrorKind::missing_attribute, file.string(), "SOPInstanceUID", "(0008,0018)", "absent"};
    }
    outcome.verdict = service::PlanVerdict::within_tolerance;
    for (const auto& beam : outcome.beams) {
      if (beam.verdict == service::BeamVerdict::outside_tolerance &&
          outcome.verdict == service::PlanVerdict::within_tolerance) {
        outcome.verdict = service::PlanVerdict::outside_tolerance;
      }
      if (beam.verdict == service::BeamVerdict::not_checked)
        outcome.verdict = service::PlanVerdict::not_checked;
    }
    outcome.plan_label = "DEMO";
    outcome.beamdata_sha256 = std::string(64, 'a');
    outcome.json_text = "{\"sop_instance_uid\": \"" + outcome.sop_instance_uid + "\", \"verdict\": \"" +
                        std::string{service::to_string(outcome.verdict)} + "\"}\n";
    outcome.html_text = "<!doctype html><title>" + outcome.sop_instance_uid + "</title>\n";
    if (calls) {
      const std::scoped_lock lock{calls->mutex};
      ++calls->by_uid[outcome.sop_instance_uid];
      ++calls->total;
    }
    return outcome;
  };
}

// An invented UID under the DCMTK-free example root 2.25 (UUID-derived UIDs): unique per test run.
inline std::string demo_uid(int n) { return "2.25.4242424242" + std::to_string(1000000 + n); }

}  // namespace countersign::test
