// Output folders are written whole, swapped into place, and never mixed (docs/limits.md,
// "Output folders").
#include <fcntl.h>
#include <sys/stat.h>
#include <unistd.h>

#include <atomic>
#include <catch2/catch.hpp>
#include <filesystem>
#include <fstream>
#include <set>
#include <sstream>
#include <thread>

#include "disc/error.hpp"
#include "disc/files.hpp"

namespace fs = std::filesystem;

namespace {

fs::path freshDir(const std::string& name) {
  const fs::path p = fs::path(DISC_TEST_OUT_DIR) / "output-files" / name;
  fs::remove_all(p);
  fs::create_directories(p);
  return p;
}

std::string slurp(const fs::path& p) {
  std::ifstream f(p, std::ios::binary);
  std::ostringstream s;
  s << f.rdbuf();
  return s.str();
}

std::set<std::string> entries(const fs::path& dir) {
  std::set<std::string> out;
  for (const auto& e : fs::directory_iterator(dir)) out.insert(e.path().filename().string());
  return out;
}

// The names listed in a folder's manifest.
std::set<std::string> manifest(const fs::path& dir) {
  std::set<std::string> out;
  std::istringstream in(slurp(dir / disc::kManifestName));
  std::string line;
  while (std::getline(in, line))
    if (!line.empty() && line[0] != '#') out.insert(line);
  return out;
}

// "f<k>.csv", built by append: GCC 12 misreports "f" + std::to_string(k) as a string overflow.
std::string numbered(int k) {
  std::string name = "f";
  name += std::to_string(k);
  name += ".csv";
  return name;
}

}  // namespace

TEST_CASE("writeFiles: a new folder gets the files and a manifest listing them", "[files]") {
  const fs::path root = freshDir("new");
  const auto paths =
      disc::writeFiles((root / "run").string(), {{"a.csv", "1\n"}, {"b.json", "{}"}});
  REQUIRE(paths.size() == 3);
  CHECK(entries(root / "run") == std::set<std::string>{"a.csv", "b.json", disc::kManifestName});
  CHECK(manifest(root / "run") == std::set<std::string>{"a.csv", "b.json"});
  CHECK(slurp(root / "run" / "a.csv") == "1\n");
  // Nothing but the folder is left beside it.
  CHECK(entries(root) == std::set<std::string>{"run"});
}

TEST_CASE("writeFiles: a second run replaces the folder whole, stale files gone", "[files]") {
  const fs::path root = freshDir("stale");
  const std::string dir = (root / "run").string();
  disc::writeFiles(dir, {{"transient-1.csv", "old"}, {"stack-SR2.svg", "old plot"}});
  disc::writeFiles(dir, {{"transient-1.csv", "new"}});
  CHECK(entries(dir) == std::set<std::string>{"transient-1.csv", disc::kManifestName});
  CHECK(slurp(root / "run" / "transient-1.csv") == "new");
  CHECK(entries(root) == std::set<std::string>{"run"});
}

TEST_CASE("writeFiles: a folder with files no run wrote is refused and left alone", "[files]") {
  const fs::path root = freshDir("foreign");
  const fs::path dir = root / "mine";
  fs::create_directories(dir);
  std::ofstream(dir / "thesis.tex") << "precious";
  CHECK_THROWS_AS(disc::writeFiles(dir.string(), {{"a.csv", "1"}}), disc::InputError);
  CHECK_THROWS_WITH(disc::checkOutputFolder(dir.string()),
                    Catch::Contains("'thesis.tex'") && Catch::Contains("no disc-manifest.txt"));
  CHECK(entries(dir) == std::set<std::string>{"thesis.tex"});
  CHECK(entries(root) == std::set<std::string>{"mine"});
  // A file added to an earlier run's folder is refused the same way.
  const std::string run = (root / "run").string();
  disc::writeFiles(run, {{"a.csv", "1"}});
  std::ofstream(root / "run" / "notes.txt") << "mine";
  CHECK_THROWS_WITH(disc::writeFiles(run, {{"a.csv", "2"}}),
                    Catch::Contains("'notes.txt'") && Catch::Contains("is not in"));
  CHECK(slurp(root / "run" / "a.csv") == "1");
}

TEST_CASE("writeFiles: a symbolic link planted in the folder is not followed", "[files]") {
  const fs::path root = freshDir("symlink");
  const std::string dir = (root / "run").string();
  disc::writeFiles(dir, {{"report.json", "{}"}});
  // Someone replaces an earlier run's file by a link to a file of theirs.
  std::ofstream(root / "victim") << "precious";
  fs::remove(root / "run" / "report.json");
  fs::create_symlink(root / "victim", root / "run" / "report.json");
  disc::writeFiles(dir, {{"report.json", "{\"new\": 1}"}});
  CHECK(slurp(root / "victim") == "precious");
  CHECK(fs::is_regular_file(fs::symlink_status(root / "run" / "report.json")));
  CHECK(slurp(root / "run" / "report.json") == "{\"new\": 1}");
  // The folder itself a link: refused.
  fs::create_directory(root / "elsewhere");
  fs::create_directory_symlink(root / "elsewhere", root / "linked");
  CHECK_THROWS_WITH(disc::writeFiles((root / "linked").string(), {{"a.csv", "1"}}),
                    Catch::Contains("symbolic link"));
  CHECK(fs::is_empty(root / "elsewhere"));
}

TEST_CASE("writeFiles: names that are not plain file names, and unusable folders", "[files]") {
  const fs::path root = freshDir("names");
  const std::string dir = (root / "run").string();
  CHECK_THROWS_AS(disc::writeFiles(dir, {{"../x.csv", "1"}}), disc::InputError);
  CHECK_THROWS_AS(disc::writeFiles(dir, {{"a.csv", "1"}, {"a.csv", "2"}}), disc::InputError);
  CHECK_THROWS_AS(disc::writeFiles(dir, {{disc::kManifestName, "x"}}), disc::InputError);
  std::ofstream(root / "plain") << "x";
  CHECK_THROWS_WITH(disc::checkOutputFolder((root / "plain").string()),
                    Catch::Contains("is not a folder"));
  CHECK_THROWS_WITH(disc::checkOutputFolder("."), Catch::Contains("working folder"));
  CHECK_THROWS_AS(disc::checkOutputFolder("/"), disc::InputError);
  CHECK(entries(root) == std::set<std::string>{"plain"});
}

TEST_CASE("writeFiles: runs into one folder from two threads take turns, never mixed", "[files]") {
  const fs::path root = freshDir("concurrent");
  const std::string dir = (root / "run").string();
  // Each writer's files carry its mark and differ in number, so a mixture would show.
  auto writer = [&](const std::string& mark, int files) {
    for (int round = 0; round < 40; ++round) {
      std::vector<std::pair<std::string, std::string>> f;
      for (int k = 0; k < files; ++k) f.emplace_back(numbered(k), mark + std::string(2000, 'x'));
      disc::writeFiles(dir, f);
    }
  };
  std::atomic<int> done{0};
  auto run = [&](const std::string& mark, int files) {
    writer(mark, files);
    ++done;
  };
  std::thread a(run, "A", 3), b(run, "B", 5);
  // Meanwhile the folder is read through one descriptor (as a reader holding it open sees it):
  // every look sees files of one run only.
  int looks = 0;
  while (done < 2) {
    const int fd = ::open(dir.c_str(), O_RDONLY | O_DIRECTORY);
    if (fd < 0) continue;
    std::set<char> marks;
    for (int n = 0; n < 5; ++n) {
      const int f = ::openat(fd, numbered(n).c_str(), O_RDONLY);
      char c = 0;
      if (f >= 0 && ::read(f, &c, 1) == 1) marks.insert(c);
      if (f >= 0) ::close(f);
    }
    ::close(fd);
    CHECK(marks.size() <= 1);
    looks += marks.empty() ? 0 : 1;
  }
  a.join();
  b.join();
  CHECK(looks > 0);
  const auto listed = manifest(root / "run");
  REQUIRE((listed.size() == 3 || listed.size() == 5));
  auto expected = listed;
  expected.insert(disc::kManifestName);
  CHECK(entries(root / "run") == expected);
  const char mark = listed.size() == 3 ? 'A' : 'B';
  for (const auto& name : listed) CHECK(slurp(root / "run" / name)[0] == mark);
  CHECK(entries(root) == std::set<std::string>{"run"});
}

TEST_CASE("writeFileAtomically: unique temporary names, a link at the path replaced", "[files]") {
  const fs::path root = freshDir("single");
  std::ofstream(root / "victim") << "precious";
  fs::create_symlink(root / "victim", root / "out.json");
  disc::writeFileAtomically((root / "out.json").string(), "new");
  CHECK(slurp(root / "victim") == "precious");
  CHECK(slurp(root / "out.json") == "new");
  CHECK_THROWS_AS(disc::writeFileAtomically((root / "missing" / "x.json").string(), "x"),
                  disc::Error);
  CHECK(entries(root) == std::set<std::string>{"out.json", "victim"});
}

TEST_CASE("StagedFolder: a file written as the run goes is committed with the others, listed",
          "[files]") {
  const fs::path root = freshDir("staged");
  const std::string dir = (root / "run").string();
  disc::writeFiles(dir, {{"transient-1.csv", "old"}, {"stack-SR2.svg", "old plot"}});
  {
    disc::StagedFolder folder(dir);
    folder.open("transient-1.csv");
    folder.append("transient-1.csv", "time [s]\r\n");
    // Until the commit the folder holds the earlier run, whole.
    CHECK(slurp(root / "run" / "transient-1.csv") == "old");
    CHECK(manifest(root / "run") == std::set<std::string>{"transient-1.csv", "stack-SR2.svg"});
    folder.append("transient-1.csv", "0,1\r\n");
    // A file still being written is never committed half way.
    CHECK_THROWS_WITH(folder.commit(), Catch::Contains("still being written"));
    folder.close("transient-1.csv");
    folder.add("report.json", "{}");
    CHECK(folder.has("transient-1.csv"));
    CHECK_THROWS_AS(folder.open("report.json"), disc::InputError);  // twice
    CHECK_THROWS_AS(folder.open("../x.csv"), disc::InputError);
    const auto paths = folder.commit();
    CHECK(paths == std::vector<std::string>{dir + "/transient-1.csv", dir + "/report.json",
                                            dir + "/" + disc::kManifestName});
  }
  CHECK(slurp(root / "run" / "transient-1.csv") == "time [s]\r\n0,1\r\n");
  CHECK(manifest(root / "run") == std::set<std::string>{"transient-1.csv", "report.json"});
  CHECK(entries(root / "run") ==
        std::set<std::string>{"transient-1.csv", "report.json", disc::kManifestName});
  CHECK(entries(root) == std::set<std::string>{"run"});
}

TEST_CASE("StagedFolder: not committed, it leaves the earlier run's folder as it was", "[files]") {
  const fs::path root = freshDir("staged-abandoned");
  const std::string dir = (root / "run").string();
  disc::writeFiles(dir, {{"a.csv", "old"}});
  {
    disc::StagedFolder folder(dir);
    folder.open("transient-1.csv");
    folder.append("transient-1.csv", "half a run");
    folder.add("report.json", "{}");
    // The prepared folder is beside the target, under a hidden unique name.
    CHECK(entries(root).size() == 2);
  }
  CHECK(entries(root / "run") == std::set<std::string>{"a.csv", disc::kManifestName});
  CHECK(slurp(root / "run" / "a.csv") == "old");
  CHECK(entries(root) == std::set<std::string>{"run"});
  // A discarded file is not committed; the rest is.
  {
    disc::StagedFolder folder(dir);
    folder.open("transient-1.csv");
    folder.append("transient-1.csv", "half");
    folder.discard("transient-1.csv");
    CHECK_FALSE(folder.has("transient-1.csv"));
    folder.add("b.csv", "new");
    folder.commit();
  }
  CHECK(entries(root / "run") == std::set<std::string>{"b.csv", disc::kManifestName});
  // An unusable target is refused when the folder is opened, before any run.
  std::ofstream(root / "run" / "notes.txt") << "mine";
  CHECK_THROWS_AS(disc::StagedFolder(dir), disc::InputError);
  CHECK(entries(root) == std::set<std::string>{"run"});
}
