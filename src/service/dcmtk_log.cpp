#include <countersign/service/dcmtk_log.hpp>

#include <dcmtk/config/osconfig.h>  // must come first among DCMTK headers

#include <dcmtk/oflog/appender.h>
#include <dcmtk/oflog/logger.h>
#include <dcmtk/oflog/loglevel.h>
#include <dcmtk/oflog/oflog.h>
#include <dcmtk/oflog/spi/logevent.h>

#include <string>

namespace countersign::service {

namespace log4cplus = dcmtk::log4cplus;

namespace {

// Each DCMTK event as one line of the service log: "dcmtk <LEVEL> <logger>: <message>".
class ServiceLogAppender : public log4cplus::Appender {
 public:
  explicit ServiceLogAppender(ServiceLog& log) : log_(log) { setThreshold(log4cplus::WARN_LOG_LEVEL); }
  ~ServiceLogAppender() override { destructorImpl(); }
  void close() override {}

 protected:
  void append(const log4cplus::spi::InternalLoggingEvent& event) override {
    const auto& level = log4cplus::getLogLevelManager().toString(event.getLogLevel());
    const auto& logger = event.getLoggerName();
    const auto& message = event.getMessage();
    log_.line("dcmtk " + std::string{level.c_str(), level.length()} + " " +
              std::string{logger.c_str(), logger.length()} + ": " +
              std::string{message.c_str(), message.length()});
  }

 private:
  ServiceLog& log_;
};

}  // namespace

struct DcmtkLogRoute::State {
  log4cplus::SharedAppenderPtrList previous;
  log4cplus::SharedAppenderPtr ours;
};

DcmtkLogRoute::DcmtkLogRoute(ServiceLog& log) : state_(std::make_unique<State>()) {
  OFLog::getLogger("dcmtk");  // DCMTK configures its default console output on first use
  log4cplus::Logger root = log4cplus::Logger::getRoot();
  state_->previous = root.getAllAppenders();
  state_->ours = log4cplus::SharedAppenderPtr(new ServiceLogAppender(log));
  root.removeAllAppenders();
  root.addAppender(state_->ours);
}

DcmtkLogRoute::~DcmtkLogRoute() {
  log4cplus::Logger root = log4cplus::Logger::getRoot();
  root.removeAppender(state_->ours);
  for (auto& appender : state_->previous) root.addAppender(appender);
}

}  // namespace countersign::service
