// The services end to end, through the built `countersign` program and the real checking pipeline
// (strict reader, engine, bundled beam data), on the invented demo plans in testdata/plans. DCMTK's
// storescu is the sending peer; SIGTERM and SIGKILL are real signals to a real process.

#include "service/dicom_plans.hpp"
#include "service/program_process.hpp"
#include "service/result_files.hpp"
#include "support/paths.hpp"

#include <arpa/inet.h>
#include <fcntl.h>
#include <gtest/gtest.h>
#include <netinet/in.h>
#include <signal.h>
#include <spawn.h>
#include <sys/socket.h>
#include <sys/stat.h>
#include <sys/wait.h>
#include <unistd.h>
#include <nlohmann/json.hpp>

#include <algorithm>
#include <chrono>
#include <fstream>
#include <functional>
#include <map>
#include <sstream>
#include <thread>
#include <vector>

extern char** environ;

namespace countersign::service {
namespace {

namespace fs = std::filesystem;
using namespace std::chrono_literals;

std::string slurp(const fs::path& file) {
  std::ifstream in(file, std::ios::binary);
  std::ostringstream text;
  text << in.rdbuf();
  return text.str();
}

bool wait_until(const std::function<bool()>& condition, std::chrono::milliseconds timeout) {
  const auto deadline = std::chrono::steady_clock::now() + timeout;
  while (std::chrono::steady_clock::now() < deadline) {
    if (condition()) return true;
    std::this_thread::sleep_for(20ms);
  }
  return condition();
}

std::size_t count_suffix(const fs::path& dir, const std::string& suffix) {
  std::size_t n = 0;
  std::error_code ec;
  for (const auto& entry : fs::directory_iterator{dir, ec}) {
    const std::string name = entry.path().filename().string();
    if (name.front() != '.' && name.size() >= suffix.size() &&
        name.compare(name.size() - suffix.size(), suffix.size(), suffix) == 0) {
      ++n;
    }
  }
  return n;
}

std::vector<fs::path> demo_plans() {
  std::vector<fs::path> plans;
  for (const auto& entry : fs::directory_iterator{test::source_dir() / "testdata" / "plans"}) {
    if (entry.path().extension() == ".dcm") plans.push_back(entry.path());
  }
  std::sort(plans.begin(), plans.end());
  return plans;
}

// The demo plan `source` under a new SOP Instance UID, so that many distinct plans can be made.
std::string copy_with_new_uid(const fs::path& source, const fs::path& target) {
  DcmFileFormat format;
  if (format.loadFile(source.c_str()).bad()) return {};
  const std::string uid = test::new_dicom_uid();
  format.getDataset()->putAndInsertString(DCM_SOPInstanceUID, uid.c_str());
  format.getMetaInfo()->putAndInsertString(DCM_MediaStorageSOPInstanceUID, uid.c_str());
  return format.saveFile(target.c_str(), EXS_LittleEndianExplicit).good() ? uid : std::string{};
}

std::size_t recorded(const fs::path& results) {
  auto history = test::open_history(results / "history.sqlite", store::Access::read_only);
  if (!history) return 0;
  auto all = history.value()->list_checks({});
  return all ? all->size() : 0;
}

class ServiceProgramTest : public ::testing::Test {
 protected:
  void SetUp() override { dir_ = test::make_temp_dir("countersign-program"); }
  void TearDown() override { fs::remove_all(dir_); }
  fs::path dir_;
};

TEST_F(ServiceProgramTest, WatchOnceChecksTheDemoPlansAndQuarantinesABadFile) {
  const auto plans = demo_plans();
  ASSERT_FALSE(plans.empty());
  fs::create_directories(dir_ / "inbox");
  for (const auto& plan : plans) fs::copy_file(plan, dir_ / "inbox" / plan.filename());
  fs::copy_file(test::source_dir() / "testdata" / "malformed" / "ion_plan_sop_class.dcm",
                dir_ / "inbox" / "ion.dcm");
  const fs::path results = dir_ / "results";

  const auto run = test::run_command(test::quote(test::program().string()) + " watch " +
                                     test::quote((dir_ / "inbox").string()) + " --study-wait 0 --out " +
                                     test::quote(results.string()) + " --once --settle-seconds 0.2");
  // One pass that had to quarantine a file ends with exit 3 and names it.
  ASSERT_EQ(run.exit_code, 3) << run.out << run.err;
  EXPECT_EQ(test::count_results(results, ".json"), plans.size()) << run.out;
  EXPECT_EQ(test::count_results(results, ".html"), plans.size());
  EXPECT_EQ(count_suffix(dir_ / "inbox", ".dcm"), 0U);
  EXPECT_EQ(recorded(results), plans.size());
  // One log line per plan.
  std::size_t checked_lines = 0;
  std::istringstream lines{run.out};
  for (std::string line; std::getline(lines, line);)
    checked_lines += line.find(" checked ") != std::string::npos;
  EXPECT_EQ(checked_lines, plans.size()) << run.out;

  // The ion plan (a SOP class not checked) is quarantined with a reason naming the attribute and its tag.
  ASSERT_TRUE(fs::exists(results / "quarantine" / "ion.dcm"));
  const std::string reason = slurp(results / "quarantine" / "ion.dcm.reason.txt");
  EXPECT_NE(reason.find("(0008,0016)"), std::string::npos) << reason;

  // Each result is the document `countersign check --json` prints for that plan.
  for (const auto& plan : plans) {
    const auto checked = test::run_command(test::quote(test::program().string()) + " check --json " +
                                           test::quote(plan.string()));
    const auto uid_at = checked.out.find("\"sop_instance_uid\": \"");
    ASSERT_NE(uid_at, std::string::npos) << checked.out;
    const auto uid_begin = uid_at + std::string{"\"sop_instance_uid\": \""}.size();
    const std::string uid = checked.out.substr(uid_begin, checked.out.find('"', uid_begin) - uid_begin);
    const std::string written = slurp(test::result_file(results, uid, ".json"));
    ASSERT_FALSE(written.empty()) << uid;
    const auto status_of = [](const std::string& json) {
      const auto at = json.rfind("\"exit_code\": ");
      return at == std::string::npos ? std::string{} : json.substr(at, 16);
    };
    EXPECT_EQ(status_of(written), status_of(checked.out)) << plan;
  }

  // Results and history are private (patient data).
  struct stat info {};
  ASSERT_EQ(::stat(results.c_str(), &info), 0);
  EXPECT_EQ(info.st_mode & 0777, 0750U);
  ASSERT_EQ(::stat((results / "history.sqlite").c_str(), &info), 0);
  EXPECT_EQ(info.st_mode & 0777, 0640U);

  // The history command lists them and prints trends per machine, energy and technique.
  const auto history = test::run_command(test::quote(test::program().string()) + " history --results " +
                                         test::quote(results.string()));
  EXPECT_EQ(history.exit_code, 0) << history.err;
  EXPECT_NE(history.out.find("FERN-LINAC-1"), std::string::npos) << history.out;
  EXPECT_NE(history.out.find(std::to_string(plans.size()) + " check(s) match"), std::string::npos)
      << history.out;

  // A second run over the same files (copied in again) checks nothing twice.
  for (const auto& plan : plans) fs::copy_file(plan, dir_ / "inbox" / plan.filename());
  const auto again = test::run_command(test::quote(test::program().string()) + " watch " +
                                       test::quote((dir_ / "inbox").string()) + " --study-wait 0 --out " +
                                       test::quote(results.string()) + " --once");
  ASSERT_EQ(again.exit_code, 0) << again.out << again.err;
  EXPECT_EQ(recorded(results), plans.size());
  EXPECT_NE(again.out.find("0 checked, " + std::to_string(plans.size()) + " already checked"),
            std::string::npos)
      << again.out;
}

// watch and receive build their check options from the same flags as check: --method and --depth
// reach every result, and the start-up line says which are in force.
TEST_F(ServiceProgramTest, WatchHonoursMethodAndDepth) {
  const fs::path plan = test::source_dir() / "testdata" / "plans" / "fern_box_4field.dcm";
  ASSERT_TRUE(fs::exists(plan)) << "committed demo plan missing: " << plan;
  fs::create_directories(dir_ / "inbox");
  fs::copy_file(plan, dir_ / "inbox" / plan.filename());
  const fs::path results = dir_ / "results";
  const auto run = test::run_command(
      test::quote(test::program().string()) + " watch " + test::quote((dir_ / "inbox").string()) +
      " --study-wait 0 --out " + test::quote(results.string()) + " --once --method pdd --depth equivalent");
  ASSERT_EQ(run.exit_code, 0) << run.out << run.err;
  EXPECT_NE(run.out.find("method pdd, depth equivalent"), std::string::npos) << run.out;
  ASSERT_EQ(test::count_results(results, ".json"), 1U) << run.out;
  std::string written;
  for (const auto& entry : fs::recursive_directory_iterator{results}) {
    if (entry.path().extension() == ".json" && entry.path().parent_path() != results)
      written = slurp(entry.path());
  }
  EXPECT_NE(written.find("\"method_choice\": \"pdd\""), std::string::npos) << written;
  EXPECT_NE(written.find("\"depth_choice\": \"equivalent\""), std::string::npos) << written;
  // A bad value is a usage error, as for check.
  const auto bad = test::run_command(test::quote(test::program().string()) + " watch " +
                                     test::quote((dir_ / "inbox").string()) + " --study-wait 0 --out " +
                                     test::quote(results.string()) + " --once --method sideways");
  EXPECT_EQ(bad.exit_code, 3) << bad.out << bad.err;
}

TEST_F(ServiceProgramTest, SigtermFinishesAndExitsCleanlyAndAKillMinus9LosesNothing) {
  const auto plans = demo_plans();
  ASSERT_FALSE(plans.empty());
  fs::create_directories(dir_ / "inbox");
  fs::create_directories(dir_ / "staging");
  constexpr int total = 150;
  std::vector<std::string> uids;
  for (int i = 0; i < total; ++i) {
    uids.push_back(copy_with_new_uid(plans[static_cast<std::size_t>(i) % plans.size()],
                                     dir_ / "staging" / ("RP" + std::to_string(i) + ".dcm")));
    ASSERT_FALSE(uids.back().empty());
  }
  const fs::path results = dir_ / "results";
  const std::vector<std::string> arguments{"watch", (dir_ / "inbox").string(), "--study-wait", "0",
                                           "--out", results.string()};
  int moved = 0;
  const auto deliver = [&](int up_to) {  // each file arrives whole (rename), as an export would
    for (; moved < up_to; ++moved) {
      fs::rename(dir_ / "staging" / ("RP" + std::to_string(moved) + ".dcm"),
                 dir_ / "inbox" / ("RP" + std::to_string(moved) + ".dcm"));
    }
  };

  {  // SIGKILL in the middle of the stream.
    Program watcher{arguments, dir_ / "run1.log"};
    ASSERT_TRUE(watcher.running());
    deliver(60);
    ASSERT_TRUE(wait_until([&] { return test::count_results(results, ".json") >= 20; }, 60s))
        << slurp(dir_ / "run1.log");
    deliver(100);  // still arriving
    watcher.signal(SIGKILL);
    const int status = watcher.wait();
    EXPECT_TRUE(WIFSIGNALED(status));
  }
  deliver(total);  // and more while it is down

  {  // Restart; SIGTERM once everything is done.
    Program watcher{arguments, dir_ / "run2.log"};
    ASSERT_TRUE(watcher.running());
    ASSERT_TRUE(wait_until(
        [&] { return count_suffix(dir_ / "inbox", ".dcm") == 0 && recorded(results) == total; }, 120s))
        << slurp(dir_ / "run2.log");
    watcher.signal(SIGTERM);
    const int status = watcher.wait();
    ASSERT_TRUE(WIFEXITED(status)) << slurp(dir_ / "run2.log");
    EXPECT_EQ(WEXITSTATUS(status), 0);
    EXPECT_NE(slurp(dir_ / "run2.log").find("stopped on signal 15"), std::string::npos)
        << slurp(dir_ / "run2.log");
  }

  auto history = test::open_history(results / "history.sqlite", store::Access::read_only);
  ASSERT_TRUE(history);
  auto records = history.value()->list_checks({});
  ASSERT_TRUE(records);
  std::map<std::string, int> per_uid;
  for (const auto& record : *records) ++per_uid[record.sop_instance_uid];
  EXPECT_EQ(records->size(), static_cast<std::size_t>(total));
  for (const auto& uid : uids) EXPECT_EQ(per_uid[uid], 1) << uid;
  // Every recorded check has its files. A batch killed after its files were written and before its
  // record left files that belong to no check (checked again under new numbers, never overwritten):
  // audit verify names them as notes, and the trail is intact.
  for (const auto& record : *records)
    EXPECT_TRUE(fs::exists(results / record.files.result_json)) << record.id;
  EXPECT_GE(test::count_results(results, ".json"), static_cast<std::size_t>(total));
  const auto audit = test::run_command(test::quote(test::program().string()) + " audit verify --results " +
                                       test::quote(results.string()));
  EXPECT_EQ(audit.exit_code, 0) << audit.out << audit.err;
  const std::size_t orphans = test::count_results(results, ".json") - static_cast<std::size_t>(total);
  if (orphans > 0) {
    EXPECT_NE(audit.out.find("is not in the history"), std::string::npos) << audit.out;
  }
  EXPECT_EQ(count_suffix(results / "quarantine", ""), 0U);
}

TEST_F(ServiceProgramTest, ReceiveChecksAPlanPushedWithStorescuAndRefusesStrangers) {
  ASSERT_EQ(test::run_command("command -v storescu").exit_code, 0)
      << "DCMTK's storescu is not installed (Debian package dcmtk; bash tools/install-deps)";
  const auto plans = demo_plans();
  ASSERT_FALSE(plans.empty());
  const fs::path results = dir_ / "results";
  const std::uint16_t port = free_port();
  Program receiver{
      {"receive", "--port", std::to_string(port), "--ae-title", "FERN-CHECK", "--allow-ae", "FERN-TPS",
       "--study-wait", "0", "--out", results.string(), "--method", "tmr", "--depth", "planned"},
      dir_ / "receive.log"};
  ASSERT_TRUE(receiver.running());
  ASSERT_TRUE(wait_until(
      [&] { return slurp(dir_ / "receive.log").find("receiving as AE") != std::string::npos; }, 20s))
      << slurp(dir_ / "receive.log");

  const std::string send = "storescu -to 10 -aec FERN-CHECK ";
  const auto sent = test::run_command(send + "-aet FERN-TPS 127.0.0.1 " + std::to_string(port) + " " +
                                      test::quote(plans.front().string()));
  EXPECT_EQ(sent.exit_code, 0) << sent.err;
  const auto stranger = test::run_command(send + "-aet UNKNOWN-AE 127.0.0.1 " + std::to_string(port) + " " +
                                          test::quote(plans.back().string()));
  EXPECT_NE(stranger.exit_code, 0);
  ASSERT_TRUE(wait_until([&] { return recorded(results) == 1; }, 20s)) << slurp(dir_ / "receive.log");
  EXPECT_EQ(test::count_results(results, ".json"), 1U);
  for (const auto& entry : fs::recursive_directory_iterator{results}) {
    if (entry.path().extension() != ".json" || entry.path().parent_path() == results) continue;
    const std::string written = slurp(entry.path());
    EXPECT_NE(written.find("\"method_choice\": \"tmr\""), std::string::npos) << written;
  }
  EXPECT_NE(slurp(dir_ / "receive.log").find("method tmr, depth planned"), std::string::npos);

  receiver.signal(SIGTERM);
  const int status = receiver.wait();
  ASSERT_TRUE(WIFEXITED(status)) << slurp(dir_ / "receive.log");
  EXPECT_EQ(WEXITSTATUS(status), 0);
  const std::string log = slurp(dir_ / "receive.log");
  EXPECT_NE(log.find("refused association from AE \"UNKNOWN-AE\""), std::string::npos) << log;
  EXPECT_NE(log.find("receiver stopped"), std::string::npos) << log;
}

// The demo plan `source` under a new SOP Instance UID, with Patient's Name bytes in a character set.
std::string copy_with_name(const fs::path& source, const fs::path& target, const std::string& character_set,
                           const std::string& raw_name) {
  DcmFileFormat format;
  if (format.loadFile(source.c_str()).bad()) return {};
  const std::string uid = test::new_dicom_uid();
  DcmDataset* dataset = format.getDataset();
  dataset->putAndInsertString(DCM_SOPInstanceUID, uid.c_str());
  dataset->putAndInsertString(DCM_SpecificCharacterSet, character_set.c_str());
  dataset->putAndInsertOFStringArray(DCM_PatientName, OFString{raw_name.data(), raw_name.size()});
  format.getMetaInfo()->putAndInsertString(DCM_MediaStorageSOPInstanceUID, uid.c_str());
  return format.saveFile(target.c_str(), EXS_LittleEndianExplicit).good() ? uid : std::string{};
}

std::vector<std::string> history_uids(const fs::path& results) {
  std::vector<std::string> uids;
  auto history = test::open_history(results / "history.sqlite", store::Access::read_only);
  if (!history) return uids;
  if (auto all = history.value()->list_checks({})) {
    for (const auto& record : *all) uids.push_back(record.sop_instance_uid);
  }
  std::sort(uids.begin(), uids.end());
  return uids;
}

TEST_F(ServiceProgramTest, AValidPlanWithALatin1NameIsCheckedNotQuarantined) {
  // Issue 10: the watcher quarantined such a plan as an "internal error".
  const auto plans = demo_plans();
  fs::create_directories(dir_ / "inbox");
  const std::string uid =
      copy_with_name(plans.front(), dir_ / "staging.dcm", "ISO_IR 100", "M\xFCller^J\xF6rg");
  ASSERT_FALSE(uid.empty());
  fs::rename(dir_ / "staging.dcm", dir_ / "inbox" / "RP.latin1.dcm");
  const fs::path results = dir_ / "results";
  const auto run = test::run_command(test::quote(test::program().string()) + " watch " +
                                     test::quote((dir_ / "inbox").string()) + " --study-wait 0 --out " +
                                     test::quote(results.string()) + " --once --quiet-seconds 0");
  ASSERT_EQ(run.exit_code, 0) << run.out << run.err;
  EXPECT_EQ(history_uids(results), std::vector<std::string>{uid});
  EXPECT_NE(
      slurp(test::result_file(results, uid, ".json")).find("\"patient_name\": \"M\xC3\xBCller^J\xC3\xB6rg\""),
      std::string::npos);
  EXPECT_NE(slurp(test::result_file(results, uid, ".html")).find("M\xC3\xBCller"), std::string::npos);
}

TEST_F(ServiceProgramTest, ReceiveChecksAPlanWithALatin1NameSentWithStorescu) {
  // Issue 10: the sender got Success, then the receiver quarantined the valid plan as an
  // "internal error". DCMTK's storescu is the real peer; the test fails without it.
  ASSERT_EQ(test::run_command("command -v storescu").exit_code, 0)
      << "DCMTK's storescu is needed (bash tools/install-deps)";
  const auto plans = demo_plans();
  const std::string uid =
      copy_with_name(plans.front(), dir_ / "latin1.dcm", "ISO_IR 100", "M\xFCller^J\xF6rg");
  ASSERT_FALSE(uid.empty());
  const fs::path results = dir_ / "results";
  const std::uint16_t port = free_port();
  Program receiver{{"receive", "--port", std::to_string(port), "--ae-title", "FERN-CHECK", "--allow-ae",
                    "FERN-TPS", "--study-wait", "0", "--out", results.string()},
                   dir_ / "receive.log"};
  ASSERT_TRUE(receiver.running());
  ASSERT_TRUE(wait_until(
      [&] { return slurp(dir_ / "receive.log").find("receiving as AE") != std::string::npos; }, 20s))
      << slurp(dir_ / "receive.log");
  const auto sent =
      test::run_command("storescu -to 10 -aec FERN-CHECK -aet FERN-TPS 127.0.0.1 " + std::to_string(port) +
                        " " + test::quote((dir_ / "latin1.dcm").string()));
  EXPECT_EQ(sent.exit_code, 0) << sent.err;
  ASSERT_TRUE(wait_until([&] { return recorded(results) == 1; }, 20s)) << slurp(dir_ / "receive.log");
  receiver.signal(SIGTERM);
  EXPECT_TRUE(WIFEXITED(receiver.wait()));
  EXPECT_EQ(count_suffix(results / "quarantine", ""), 0U) << slurp(dir_ / "receive.log");
  EXPECT_NE(slurp(test::result_file(results, uid, ".json")).find("M\xC3\xBCller^J\xC3\xB6rg"),
            std::string::npos);
}

TEST_F(ServiceProgramTest, CheckFolderAndWatchTakeTheSameFilesByContentWhateverTheirNames) {
  // Issue 10, item 6: `check FOLDER` took only *.dcm, while `watch` took every name.
  const auto plans = demo_plans();
  ASSERT_GE(plans.size(), 4U);
  const fs::path folder = dir_ / "export";
  fs::create_directories(folder);
  const std::string first = copy_with_new_uid(plans[0], folder / "RP1.2.3");
  const std::string second = copy_with_new_uid(plans[1], folder / "RP.X.DCM");
  ASSERT_FALSE(copy_with_new_uid(plans[2], folder / ".RP.hidden.dcm").empty());    // an exporter's temporary
  ASSERT_FALSE(copy_with_new_uid(plans[3], folder / "RP.half.dcm.part").empty());  // still being written
  fs::copy_file(test::source_dir() / "testdata" / "malformed" / "ct_sop_class.dcm", folder / "CT.1.2.3");
  std::ofstream{folder / "README.txt"} << "export notes\n";
  for (const auto& entry : fs::directory_iterator{folder}) {
    fs::last_write_time(entry.path(), fs::file_time_type::clock::now() - std::chrono::minutes{1});
  }
  std::vector<std::string> expected{first, second};
  std::sort(expected.begin(), expected.end());

  const auto checked = test::run_command(test::quote(test::program().string()) + " check --json " +
                                         test::quote(folder.string()));
  ASSERT_LE(checked.exit_code, 2) << checked.out << checked.err;
  const auto document = nlohmann::json::parse(checked.out);
  std::vector<std::string> checked_uids;
  for (const auto& plan : document.at("plans")) checked_uids.push_back(plan.at("sop_instance_uid"));
  std::sort(checked_uids.begin(), checked_uids.end());
  EXPECT_EQ(checked_uids, expected);
  EXPECT_EQ(document.at("skipped_files").size(), 2U) << document.at("skipped_files");  // the CT, the notes
  EXPECT_TRUE(document.at("errors").empty());

  const fs::path results = dir_ / "results";
  const auto watched =
      test::run_command(test::quote(test::program().string()) + " watch " + test::quote(folder.string()) +
                        " --study-wait 0 --out " + test::quote(results.string()) + " --once");
  EXPECT_EQ(watched.exit_code, 3) << watched.out;  // the notes were quarantined
  EXPECT_EQ(history_uids(results), expected) << watched.out;
  // The CT image is kept for its study (the check reads it as the study too, never as a plan).
  EXPECT_TRUE(fs::exists(results / "studies" / "2.25.301642988147209845366118572013.105.2.0" /
                         "2.25.301642988147209845366118572013.105.3.0" /
                         "2.25.301642988147209845366118572013.105.1.0.dcm"))
      << watched.out;
  EXPECT_TRUE(fs::exists(results / "quarantine" / "README.txt"));
  // The same exclusions: hidden and temporary files are left alone by both.
  EXPECT_TRUE(fs::exists(folder / ".RP.hidden.dcm"));
  EXPECT_TRUE(fs::exists(folder / "RP.half.dcm.part"));
}

TEST_F(ServiceProgramTest, WatchOnceEndsWithExit3AndNamesAFileItCannotRead) {
  // Issue 10, item 3: `watch --once` never ended while one file kept failing.
  const auto plans = demo_plans();
  fs::create_directories(dir_ / "inbox");
  const fs::path results = dir_ / "results";
  fs::create_directories(results);
  const bool root = ::geteuid() == 0;
  const std::string user = root ? "runuser -u nobody -- " : "";
  if (root) {
    ASSERT_EQ(test::run_command("chown -R nobody " + test::quote(dir_.string())).exit_code, 0);
  }
  const fs::path locked = dir_ / "inbox" / "RP.locked.dcm";
  fs::copy_file(plans.front(), locked);
  fs::permissions(locked, root ? fs::perms{0600} : fs::perms::none);  // root's own, or nobody's at all
  fs::last_write_time(locked, fs::file_time_type::clock::now() - std::chrono::minutes{1});
  const auto run = test::run_command("timeout 120 " + user + test::quote(test::program().string()) +
                                     " watch " + test::quote((dir_ / "inbox").string()) +
                                     " --study-wait 0 --out " + test::quote(results.string()) + " --once");
  EXPECT_EQ(run.exit_code, 3) << run.out << run.err;
  EXPECT_NE(run.out.find("not taken: RP.locked.dcm: error RP.locked.dcm: cannot read"), std::string::npos)
      << run.out;
  EXPECT_TRUE(fs::exists(locked));  // nothing lost
  fs::permissions(locked, fs::perms{0600});
}

}  // namespace
}  // namespace countersign::service
