#pragma once
// Internal to src/record: owning wrapper for HDF5 identifiers and the text of the
// library's error stack. Not part of nvsyn's public interface.
#include <hdf5.h>

#include <string>
#include <utility>

namespace nvsyn::detail {

// Owns one HDF5 identifier and closes it with the matching H5?close function.
// HDF5 keeps a file open while any object inside it is open, so ownership has to be
// exact for a run file to be complete on disk when the writer is done with it.
class H5Handle {
 public:
  using Closer = herr_t (*)(hid_t);

  H5Handle() = default;
  H5Handle(hid_t id, Closer closer) : id_(id), closer_(closer) {}
  ~H5Handle() { reset(); }

  H5Handle(H5Handle&& other) noexcept
      : id_(std::exchange(other.id_, H5I_INVALID_HID)), closer_(other.closer_) {}
  H5Handle& operator=(H5Handle&& other) noexcept {
    if (this != &other) {
      reset();
      id_ = std::exchange(other.id_, H5I_INVALID_HID);
      closer_ = other.closer_;
    }
    return *this;
  }
  H5Handle(const H5Handle&) = delete;
  H5Handle& operator=(const H5Handle&) = delete;

  hid_t get() const { return id_; }
  bool valid() const { return id_ >= 0; }

  // Closes now and reports whether HDF5 accepted the close (a failed close of a
  // file means data may not have reached the disk).
  bool close() {
    if (!valid()) return true;
    const herr_t status = closer_(id_);
    id_ = H5I_INVALID_HID;
    return status >= 0;
  }
  void reset() { close(); }

 private:
  hid_t id_ = H5I_INVALID_HID;
  Closer closer_ = nullptr;
};

inline H5Handle file_handle(hid_t id) { return {id, H5Fclose}; }
inline H5Handle group_handle(hid_t id) { return {id, H5Gclose}; }
inline H5Handle dataset_handle(hid_t id) { return {id, H5Dclose}; }
inline H5Handle space_handle(hid_t id) { return {id, H5Sclose}; }
inline H5Handle type_handle(hid_t id) { return {id, H5Tclose}; }
inline H5Handle attribute_handle(hid_t id) { return {id, H5Aclose}; }
inline H5Handle plist_handle(hid_t id) { return {id, H5Pclose}; }
inline H5Handle object_handle(hid_t id) { return {id, H5Oclose}; }

// HDF5 prints its whole error stack to stderr by default; nvsyn reports failures
// through its own exceptions instead, so the automatic printing is switched off.
inline void silence_hdf5_error_printing() { H5Eset_auto2(H5E_DEFAULT, nullptr, nullptr); }

// The innermost description on HDF5's current error stack (the most specific
// reason, e.g. "unable to open file: ... No such file or directory"), or a
// generic phrase when the stack is empty. Clears the stack.
inline std::string hdf5_error_text() {
  std::string innermost;
  auto visit = [](unsigned /*n*/, const H5E_error2_t* error, void* data) -> herr_t {
    auto* out = static_cast<std::string*>(data);
    if (out->empty() && error->desc != nullptr && error->desc[0] != '\0') *out = error->desc;
    return 0;
  };
  // Walking upward visits the innermost (first pushed) error first.
  H5Ewalk2(H5E_DEFAULT, H5E_WALK_UPWARD, visit, &innermost);
  H5Eclear2(H5E_DEFAULT);
  return innermost.empty() ? std::string("HDF5 reported an error") : innermost;
}

// A variable-length UTF-8 string type: h5py returns these as Python str and
// MATLAB's h5readatt as char, without decoding steps on the user's side.
inline H5Handle utf8_string_type() {
  H5Handle type = type_handle(H5Tcopy(H5T_C_S1));
  if (type.valid()) {
    H5Tset_size(type.get(), H5T_VARIABLE);
    H5Tset_cset(type.get(), H5T_CSET_UTF8);
  }
  return type;
}

}  // namespace nvsyn::detail
