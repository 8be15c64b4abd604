// Result<T>: a value or an error message, for recoverable errors (bad input, bad files).
#pragma once

#include <string>
#include <utility>
#include <variant>

namespace codedrift {

// A recoverable error: a message a person can act on ("file:line: reason").
struct Error {
  std::string message;
};

// Holds either a T or an Error. Check ok() before value().
template <class T>
class [[nodiscard]] Result {
 public:
  Result(T value) : data_(std::move(value)) {}      // NOLINT(google-explicit-constructor)
  Result(Error error) : data_(std::move(error)) {}  // NOLINT(google-explicit-constructor)

  bool ok() const { return std::holds_alternative<T>(data_); }
  explicit operator bool() const { return ok(); }
  const T& value() const& { return std::get<T>(data_); }
  T& value() & { return std::get<T>(data_); }
  T&& value() && { return std::get<T>(std::move(data_)); }
  const Error& error() const { return std::get<Error>(data_); }

 private:
  std::variant<T, Error> data_;
};

// Result for operations that return nothing on success.
struct Ok {};
using Status = Result<Ok>;

}  // namespace codedrift
