// Resolves the libpq functions the PostgreSQL store uses with dlopen/dlsym.

#include "libpq_api.hpp"

#include <dlfcn.h>

#include <string>

namespace countersign::store::detail {

namespace {

Error libpq_error(const std::string& what) {
  return Error{ErrorKind::io, "", "", "",
               std::string{"PostgreSQL client library "} + libpq_file_name + ": " + what +
                   " (Debian package libpq5; needed only for a postgresql:// history)"};
}

// dlsym returns void*; the cast to a function pointer is how POSIX defines its use.
template <typename Function>
bool resolve(void* library, const char* name, Function& function) {
  function = reinterpret_cast<Function>(::dlsym(library, name));  // NOLINT: POSIX dlsym contract
  return function != nullptr;
}

}  // namespace

Expected<std::shared_ptr<const LibpqApi>> load_libpq() {
  void* handle = ::dlopen(libpq_file_name, RTLD_NOW | RTLD_LOCAL);
  if (handle == nullptr) {
    const char* reason = ::dlerror();
    return libpq_error(std::string{"cannot be loaded: "} + (reason != nullptr ? reason : "not found"));
  }
  auto api = std::make_shared<LibpqApi>();
  api->library = std::shared_ptr<void>(handle, [](void* loaded) { ::dlclose(loaded); });
  const bool complete =
      resolve(handle, "PQconnectdbParams", api->connectdb_params) &&
      resolve(handle, "PQstatus", api->status) && resolve(handle, "PQerrorMessage", api->error_message) &&
      resolve(handle, "PQfinish", api->finish) && resolve(handle, "PQreset", api->reset) &&
      resolve(handle, "PQexec", api->exec) && resolve(handle, "PQexecParams", api->exec_params) &&
      resolve(handle, "PQresultStatus", api->result_status) &&
      resolve(handle, "PQresultErrorMessage", api->result_error_message) &&
      resolve(handle, "PQcmdStatus", api->cmd_status) && resolve(handle, "PQclear", api->clear) &&
      resolve(handle, "PQntuples", api->ntuples) && resolve(handle, "PQnfields", api->nfields) &&
      resolve(handle, "PQgetisnull", api->getisnull) && resolve(handle, "PQgetvalue", api->getvalue) &&
      resolve(handle, "PQgetlength", api->getlength) && resolve(handle, "PQftype", api->ftype) &&
      resolve(handle, "PQconninfoParse", api->conninfo_parse) &&
      resolve(handle, "PQconninfoFree", api->conninfo_free) && resolve(handle, "PQfreemem", api->freemem);
  if (!complete) return libpq_error("lacks a function the store uses");
  return std::shared_ptr<const LibpqApi>{std::move(api)};
}

}  // namespace countersign::store::detail
