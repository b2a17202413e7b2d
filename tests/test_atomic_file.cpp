// AtomicFile: an output is either the old file or the complete new one.
#include <catch2/catch.hpp>

#include <sys/stat.h>
#include <unistd.h>

#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <iterator>
#include <random>
#include <string>
#include <vector>

#include "baroz/core/error.hpp"
#include "baroz/output/atomic_file.hpp"

namespace fs = std::filesystem;

namespace {

/// A fresh empty directory, removed with its contents at scope exit.
class TempDir {
 public:
  TempDir() {
    std::string tmpl = (fs::temp_directory_path() / "baroz_atomic_XXXXXX").string();
    REQUIRE(::mkdtemp(tmpl.data()) != nullptr);
    path_ = tmpl;
  }
  ~TempDir() {
    std::error_code ec;
    fs::remove_all(path_, ec);
  }
  const fs::path& path() const { return path_; }
  std::vector<std::string> entries() const {
    std::vector<std::string> names;
    for (const auto& e : fs::directory_iterator(path_)) {
      names.push_back(e.path().filename().string());
    }
    return names;
  }

 private:
  fs::path path_;
};

std::string read_file(const fs::path& p) {
  std::ifstream in(p, std::ios::binary);
  return std::string(std::istreambuf_iterator<char>(in), {});
}

void write_plain(const fs::path& p, const std::string& content) {
  std::ofstream out(p, std::ios::binary);
  out << content;
}

}  // namespace

TEST_CASE("atomic file commit creates the file with the content",
          "[output][atomic_file]") {
  TempDir dir;
  const fs::path target = dir.path() / "out.csv";
  {
    baroz::AtomicFile file(target.string());
    file.write("time,height_m\n");
    file.write("0,0.000\n", 8);
    file.commit();
    CHECK(file.committed());
    CHECK(file.fd() == -1);
  }
  CHECK(read_file(target) == "time,height_m\n0,0.000\n");
  CHECK(dir.entries() == std::vector<std::string>{"out.csv"});  // no temp left
}

TEST_CASE("atomic file writes more than its buffer intact",
          "[output][atomic_file]") {
  TempDir dir;
  const fs::path target = dir.path() / "big.bin";
  std::mt19937 rng(5);
  std::string expected;
  {
    baroz::AtomicFile file(target.string());
    // Mixed small writes and writes larger than the 1 MiB buffer.
    for (int i = 0; i < 40; ++i) {
      const std::size_t n = (i % 7 == 0) ? baroz::AtomicFile::kBufferSize + 17
                                         : rng() % 100'000;
      std::string chunk(n, '\0');
      for (char& c : chunk) c = static_cast<char>(rng());
      file.write(chunk);
      expected += chunk;
    }
    file.commit();
  }
  CHECK(expected.size() > 3 * baroz::AtomicFile::kBufferSize);
  CHECK(read_file(target) == expected);
}

TEST_CASE("atomic file without commit leaves neither file nor temp",
          "[output][atomic_file]") {
  TempDir dir;
  const fs::path target = dir.path() / "never.csv";
  {
    baroz::AtomicFile file(target.string());
    file.write("partial");
    file.flush();
    // The temporary file sits next to the target, hidden, with the pinned
    // name pattern.
    const std::string temp_name = fs::path(file.temp_path()).filename().string();
    CHECK(temp_name.rfind(".never.csv.tmp.", 0) == 0);
    CHECK(temp_name.size() == std::string(".never.csv.tmp.").size() + 6);
    CHECK(fs::exists(file.temp_path()));
  }
  CHECK(dir.entries().empty());
}

TEST_CASE("atomic file replaces the target only at commit",
          "[output][atomic_file]") {
  TempDir dir;
  const fs::path target = dir.path() / "report.json";
  write_plain(target, "old content");
  {
    baroz::AtomicFile file(target.string());
    file.write("new content, longer than the old one");
    file.flush();
    CHECK(read_file(target) == "old content");  // until commit
    file.commit();
    CHECK(read_file(target) == "new content, longer than the old one");
  }
  {
    baroz::AtomicFile file(target.string());
    file.write("abandoned");
    file.flush();
  }
  CHECK(read_file(target) == "new content, longer than the old one");
  CHECK(dir.entries() == std::vector<std::string>{"report.json"});
}

TEST_CASE("atomic file gets the permissions of a newly created file",
          "[output][atomic_file]") {
  TempDir dir;
  const fs::path target = dir.path() / "mode.csv";
  const mode_t old_mask = ::umask(027);
  {
    baroz::AtomicFile file(target.string());
    file.commit();
  }
  ::umask(old_mask);
  struct stat st{};
  REQUIRE(::stat(target.c_str(), &st) == 0);
  CHECK((st.st_mode & 0777) == (0666 & ~027));  // not mkstemp's 0600
}

TEST_CASE("atomic file errors are output errors naming the target",
          "[output][atomic_file]") {
  TempDir dir;
  SECTION("missing directory") {
    const std::string target = (dir.path() / "no_such_dir" / "out.csv").string();
    try {
      baroz::AtomicFile file(target);
      FAIL("no exception");
    } catch (const baroz::Error& e) {
      CHECK(e.code() == baroz::ExitCode::kOutput);
      CHECK(std::string(e.what()) ==
            "cannot write '" + target + "': no such file or directory");
    }
  }
  SECTION("a regular file where the directory should be") {
    write_plain(dir.path() / "file", "x");
    const std::string target = (dir.path() / "file" / "out.csv").string();
    try {
      baroz::AtomicFile file(target);
      FAIL("no exception");
    } catch (const baroz::Error& e) {
      CHECK(e.code() == baroz::ExitCode::kOutput);
      CHECK(std::string(e.what()) == "cannot write '" + target + "': not a directory");
    }
  }
  SECTION("a directory without write permission") {
    if (::geteuid() == 0) {
      WARN("running as root: permission bits are not enforced, case skipped");
      return;
    }
    const fs::path locked = dir.path() / "locked";
    fs::create_directory(locked);
    fs::permissions(locked, fs::perms::owner_read | fs::perms::owner_exec);
    const std::string target = (locked / "out.csv").string();
    try {
      baroz::AtomicFile file(target);
      FAIL("no exception");
    } catch (const baroz::Error& e) {
      CHECK(e.code() == baroz::ExitCode::kOutput);
      CHECK(std::string(e.what()) == "cannot write '" + target + "': permission denied");
    }
    fs::permissions(locked, fs::perms::owner_all);
  }
  SECTION("the target is an existing directory") {
    fs::create_directory(dir.path() / "sub");
    const std::string target = (dir.path() / "sub").string();
    baroz::AtomicFile file(target);
    file.write("x");
    try {
      file.commit();
      FAIL("no exception");
    } catch (const baroz::Error& e) {
      CHECK(e.code() == baroz::ExitCode::kOutput);
      CHECK(std::string(e.what()) == "cannot write '" + target + "': is a directory");
    }
  }
  SECTION("a path ending in a slash") {
    CHECK_THROWS_AS(baroz::AtomicFile(dir.path().string() + "/"), baroz::Error);
  }
  // No temporary file is left behind by any failure.
  for (const auto& name : dir.entries()) {
    CHECK(name.find(".tmp.") == std::string::npos);
  }
}

TEST_CASE("atomic file refuses writes after commit", "[output][atomic_file]") {
  TempDir dir;
  baroz::AtomicFile file((dir.path() / "done.txt").string());
  file.write("a");
  file.commit();
  CHECK_THROWS_AS(file.write("b"), baroz::Error);
  CHECK(read_file(dir.path() / "done.txt") == "a");
}

TEST_CASE("a device target such as /dev/null is written in place, never replaced",
          "[output][atomic]") {
  // Replacing /dev/null by a rename would turn it into a regular file for
  // every program on the machine.
  {
    baroz::AtomicFile file("/dev/null");
    file.write("discarded\n", 10);
    file.commit();
  }
  struct stat info {};
  REQUIRE(::stat("/dev/null", &info) == 0);
  CHECK(S_ISCHR(info.st_mode));
}
