// `yoke verify` end to end: it accepts the certificate `yoke solve` wrote, rejects hand-edited
// ones (exit 1), and refuses certificates that do not fit the graph (exit 2).
#include <gtest/gtest.h>

#include <functional>
#include <nlohmann/json.hpp>
#include <set>
#include <string>

#include "run_yoke.h"

namespace yoke::cli::testing {
namespace {

using nlohmann::json;

// Two Vardolune triangles joined by a bridge, plus a spare courier: odd cycles make the
// certificate carry blossoms in some optima. Ids are sparse on purpose.
const char* const kTwoTriangles =
    "101 102 8\n102 103 8\n103 101 8\n"
    "201 202 7\n202 203 9\n203 201 6\n"
    "103 201 2\n"
    "201 18446744073709551615 1\n";

struct Solved {
  json output;
  json certificate;
};

class VerifyCommand : public ::testing::Test {
 protected:
  Solved solve(const std::string& mode = "max-weight") {
    const RunResult run = run_yoke(dir_, {"solve", graph_, "--mode", mode, "--certificate",
                                          dir_.file("cert.json")});
    EXPECT_EQ(run.exit_code, 0) << run.err;
    return {json::parse(run.out), json::parse(dir_.read("cert.json"))};
  }

  RunResult verify(const std::string& certificate_text) {
    return run_yoke(dir_, {"verify", graph_, dir_.write("edited.json", certificate_text)});
  }

  // A copy of `certificate` with `edit` applied, as text.
  static std::string edited(json certificate, const std::function<void(json&)>& edit) {
    edit(certificate);
    return certificate.dump();
  }

  TempDir dir_;
  std::string graph_ = dir_.write("g.txt", kTwoTriangles);
};

TEST_F(VerifyCommand, AcceptsTheCertificateSolveWroteInEveryMode) {
  for (const std::string mode : {"max-weight", "max-cardinality"}) {
    SCOPED_TRACE(mode);
    const Solved solved = solve(mode);
    EXPECT_EQ(solved.certificate.at("format"), "yoke-certificate/2");
    EXPECT_EQ(solved.certificate.at("mode"), mode);
    const RunResult run = run_yoke(dir_, {"verify", graph_, dir_.file("cert.json")});
    ASSERT_EQ(run.exit_code, 0) << run.out << run.err;
    const json verdict = json::parse(run.out);
    EXPECT_EQ(verdict.at("valid"), true);
    EXPECT_EQ(verdict.at("weight"), solved.output.at("weight"));
    EXPECT_EQ(verdict.at("pairs"), solved.output.at("pairs"));
  }
}

TEST_F(VerifyCommand, CertificateUsesExternalIds) {
  const Solved solved = solve();
  std::set<std::uint64_t> ids;
  for (const json& vertex : solved.certificate.at("vertices")) {
    ids.insert(vertex.at("id").get<std::uint64_t>());
  }
  EXPECT_EQ(ids, (std::set<std::uint64_t>{101, 102, 103, 201, 202, 203, 18446744073709551615ULL}));
}

TEST_F(VerifyCommand, RejectsARaisedVertexDual) {
  const Solved solved = solve();
  // Raising u(v) breaks complementary slackness whatever v is: a matched v's edge loses its
  // zero slack, an exposed v gets u > 0.
  const RunResult run = verify(edited(solved.certificate, [](json& c) {
    c["vertices"][0]["dual_x2"] = c["vertices"][0]["dual_x2"].get<std::int64_t>() + 2;
  }));
  EXPECT_EQ(run.exit_code, 1) << run.out << run.err;
  const json verdict = json::parse(run.out);
  EXPECT_EQ(verdict.at("valid"), false);
  EXPECT_FALSE(verdict.at("reason").get<std::string>().empty());
}

TEST_F(VerifyCommand, RejectsAChangedMate) {
  const Solved solved = solve();
  const json& vertices = solved.certificate.at("vertices");
  // Point a matched vertex at a vertex that is neither itself nor its mate.
  std::size_t matched = vertices.size();
  for (std::size_t i = 0; i < vertices.size() && matched == vertices.size(); ++i) {
    if (!vertices[i].at("mate").is_null()) matched = i;
  }
  ASSERT_LT(matched, vertices.size()) << "the optimum of kTwoTriangles has pairs";
  json other;
  for (const json& v : vertices) {
    if (v.at("id") != vertices[matched].at("id") && v.at("id") != vertices[matched].at("mate")) {
      other = v.at("id");
      break;
    }
  }
  const RunResult run =
      verify(edited(solved.certificate, [&](json& c) { c["vertices"][matched]["mate"] = other; }));
  EXPECT_EQ(run.exit_code, 1) << run.out << run.err;
  EXPECT_EQ(json::parse(run.out).at("valid"), false);
}

TEST_F(VerifyCommand, RejectsAnUnmatchedPair) {
  const Solved solved = solve();
  // Dropping one pair from the matching (both ends) leaves a non-optimal matching.
  const RunResult run = verify(edited(solved.certificate, [](json& c) {
    for (json& v : c["vertices"]) {
      if (v["mate"].is_null()) continue;
      const json mate = v["mate"];
      v["mate"] = nullptr;
      for (json& w : c["vertices"]) {
        if (w["id"] == mate) w["mate"] = nullptr;
      }
      break;
    }
  }));
  EXPECT_EQ(run.exit_code, 1) << run.out << run.err;
}

TEST_F(VerifyCommand, CertificateForAnotherGraphIsAnError) {
  const Solved solved = solve();
  const RunResult unknown = verify(edited(solved.certificate, [](json& c) {
    c["vertices"][0]["id"] = 999;
  }));
  EXPECT_EQ(unknown.exit_code, 2);
  EXPECT_NE(unknown.err.find("vertex 999 is not in the graph"), std::string::npos) << unknown.err;

  const RunResult missing = verify(edited(solved.certificate, [](json& c) {
    c["vertices"].erase(c["vertices"].size() - 1);
  }));
  EXPECT_EQ(missing.exit_code, 2);
  EXPECT_NE(missing.err.find("has no entry"), std::string::npos) << missing.err;
}

TEST_F(VerifyCommand, MalformedCertificateIsAnError) {
  const RunResult truncated = verify("{\"format\":\"yoke-certificate/2\",\"vertices\":[");
  EXPECT_EQ(truncated.exit_code, 2);
  EXPECT_EQ(truncated.out, "");
  EXPECT_EQ(truncated.err.rfind("error: " + dir_.file("edited.json") + ": not valid JSON", 0), 0u)
      << truncated.err;

  const RunResult wrong_format = verify("{\"format\":\"something-else\"}");
  EXPECT_EQ(wrong_format.exit_code, 2);

  const RunResult absent = run_yoke(dir_, {"verify", graph_, dir_.file("absent.json")});
  EXPECT_EQ(absent.exit_code, 2);
  EXPECT_EQ(absent.err.rfind("error: cannot open ", 0), 0u) << absent.err;
}

TEST_F(VerifyCommand, ReadsTheGraphFromStdin) {
  solve();
  const RunResult run = run_yoke(dir_, {"verify", "-", dir_.file("cert.json")}, kTwoTriangles);
  EXPECT_EQ(run.exit_code, 0) << run.out << run.err;
}

}  // namespace
}  // namespace yoke::cli::testing
