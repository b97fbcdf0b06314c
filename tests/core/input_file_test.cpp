// Input files: regular files only, text within the size limit (core/input_file.hpp).
#include "core/input_file.hpp"

#include <sys/stat.h>
#include <unistd.h>

#include <catch2/catch.hpp>
#include <filesystem>
#include <fstream>

#include "core/error.hpp"

using namespace nvsyn;

namespace {

// A fresh folder per test case, removed at the end.
struct Scratch {
  std::filesystem::path dir;
  Scratch() {
    dir = std::filesystem::temp_directory_path() / ("nvsyn_input_file_test_" + std::to_string(::getpid()));
    std::filesystem::remove_all(dir);
    std::filesystem::create_directories(dir);
  }
  ~Scratch() {
    std::error_code ec;
    std::filesystem::remove_all(dir, ec);
  }
  std::string write(const std::string& name, const std::string& text) const {
    const std::string path = (dir / name).string();
    std::ofstream(path, std::ios::binary) << text;
    return path;
  }
};

}  // namespace

TEST_CASE("a regular file is read whole, byte for byte", "[input_file]") {
  Scratch s;
  const std::string text("a = 1\n\0binary\r\n", 15);
  const std::string path = s.write("model.toml", text);
  CHECK(read_input_text(path, "model file") == text);
  CHECK(check_input_file(path, "model file") == text.size());
  CHECK_FALSE(input_file_problem(path, "model file").has_value());
  CHECK(read_input_text(s.write("empty.toml", ""), "model file").empty());
}

TEST_CASE("a file at the size limit is read, one byte more is refused", "[input_file]") {
  Scratch s;
  const std::string path = s.write("list.csv", std::string(1000, 'x'));
  CHECK(read_input_text(path, "connection list", 1000).size() == 1000);
  REQUIRE_THROWS_WITH(read_input_text(path, "connection list", 999),
                      path + ": error: is 1000 bytes; a connection list may be at most 999 bytes (text inputs are read "
                      "whole into memory)");
}

TEST_CASE("folders, devices and pipes are refused before reading", "[input_file]") {
  Scratch s;
  REQUIRE_THROWS_WITH(read_input_text(s.dir.string(), "model file"),
                      s.dir.string() + ": error: is a folder, not a model file");
  REQUIRE_THROWS_WITH(read_input_text("/dev/zero", "weight matrix file"),
                      Catch::StartsWith("/dev/zero: error: is a character device, not a regular file; a weight matrix "
                                        "file must be a regular file"));
  const std::string fifo = (s.dir / "pipe").string();
  REQUIRE(::mkfifo(fifo.c_str(), 0600) == 0);
  // Must return at once although no writer ever opens the pipe.
  REQUIRE_THROWS_WITH(read_input_text(fifo, "device preset"),
                      Catch::StartsWith(fifo + ": error: is a FIFO (named pipe), not a regular file"));
  REQUIRE_THROWS_WITH(check_input_file(fifo, "run file"), Catch::Contains("is a FIFO (named pipe)"));
  CHECK(input_file_problem("/dev/null", "run file").value().starts_with("is a character device"));
}

TEST_CASE("a symbolic link to a regular file is read; a missing file names the reason", "[input_file]") {
  Scratch s;
  const std::string target = s.write("preset.toml", "x = 1\n");
  const std::string link = (s.dir / "link.toml").string();
  std::filesystem::create_symlink(target, link);
  CHECK(read_input_text(link, "device preset") == "x = 1\n");
  const std::string missing = (s.dir / "missing.toml").string();
  REQUIRE_THROWS_WITH(read_input_text(missing, "model file"),
                      missing + ": error: cannot read the model file: No such file or directory");
}
