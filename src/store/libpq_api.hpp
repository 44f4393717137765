// libpq, loaded when a PostgreSQL store is first used instead of linked into the program: libpq
// brings some twenty shared libraries (Kerberos, LDAP, GnuTLS), and relocating them cost `check` of
// one plan more start-up time than reading and checking the plan. SQLite users never load it.
#pragma once

#include <countersign/util/error.hpp>

#include <libpq-fe.h>

#include <memory>

namespace countersign::store::detail {

// The libpq functions the store uses, resolved from the shared library. Holding the object keeps
// the library loaded.
struct LibpqApi {
  decltype(&::PQconnectdbParams) connectdb_params = nullptr;
  decltype(&::PQstatus) status = nullptr;
  decltype(&::PQerrorMessage) error_message = nullptr;
  decltype(&::PQfinish) finish = nullptr;
  decltype(&::PQreset) reset = nullptr;
  decltype(&::PQexec) exec = nullptr;
  decltype(&::PQexecParams) exec_params = nullptr;
  decltype(&::PQresultStatus) result_status = nullptr;
  decltype(&::PQresultErrorMessage) result_error_message = nullptr;
  decltype(&::PQcmdStatus) cmd_status = nullptr;
  decltype(&::PQclear) clear = nullptr;
  decltype(&::PQntuples) ntuples = nullptr;
  decltype(&::PQnfields) nfields = nullptr;
  decltype(&::PQgetisnull) getisnull = nullptr;
  decltype(&::PQgetvalue) getvalue = nullptr;
  decltype(&::PQgetlength) getlength = nullptr;
  decltype(&::PQftype) ftype = nullptr;
  decltype(&::PQconninfoParse) conninfo_parse = nullptr;
  decltype(&::PQconninfoFree) conninfo_free = nullptr;
  decltype(&::PQfreemem) freemem = nullptr;

  std::shared_ptr<void> library;  // the dlopen handle; dlclose when the last holder goes
};

// The library's file name of the Debian package libpq5 (the ABI libpq-fe.h describes).
inline constexpr const char* libpq_file_name = "libpq.so.5";

// Loads libpq (once per call; the dynamic loader counts references, so a second load is cheap).
// An io error naming the library and the package when it is not installed or lacks a function.
Expected<std::shared_ptr<const LibpqApi>> load_libpq();

}  // namespace countersign::store::detail
