// The certificate's JSON form: a round trip through external ids, and every way a file can
// fail to be a certificate for the graph at hand.
#include <gtest/gtest.h>

#include <functional>
#include <nlohmann/json.hpp>
#include <random>
#include <sstream>
#include <string>

#include "tools/cli/certificate_json.h"

namespace yoke::cli {
namespace {

using nlohmann::json;

// Five vertices with sparse external ids; one blossom inside another. The numbers need not
// prove anything: only the JSON form is under test here.
const std::vector<std::uint64_t> kIds = {900, 18446744073709551615ULL, 42, 7, 0};

Certificate sample_certificate() {
  Certificate cert;
  cert.mode = Mode::max_cardinality;
  cert.weight_offset = 11;
  cert.mate = {1, 0, 3, 2, kNoVertex};
  cert.vertex_dual2 = {4, -6, 0, 9223372036854775807LL, 0};
  const NodeId n = 5;
  cert.blossoms.push_back({{0, 1, 2}, 8, 2});
  cert.blossoms.push_back({{n + 0, 3, 4}, 2, 4});
  return cert;
}

std::string written(const Certificate& cert) {
  std::ostringstream out;
  write_certificate_json(out, cert, kIds);
  return out.str();
}

std::string error_of(const std::string& text) {
  try {
    parse_certificate_json(text, formats::IdMap(kIds));
  } catch (const CertificateFormatError& error) {
    return error.what();
  }
  ADD_FAILURE() << "accepted: " << text;
  return "";
}

// The sample's JSON with one edit applied.
std::string edited(const std::function<void(json&)>& edit) {
  json document = json::parse(written(sample_certificate()));
  edit(document);
  return document.dump();
}

TEST(CertificateJson, WritesExternalIdsAndTheDocumentedLayout) {
  const json document = json::parse(written(sample_certificate()));
  EXPECT_EQ(document["format"], "yoke-certificate/2");
  EXPECT_EQ(document["mode"], "max-cardinality");
  EXPECT_EQ(document["weight_offset"], 11);
  ASSERT_EQ(document["vertices"].size(), 5u);
  EXPECT_EQ(document["vertices"][0],
            json::parse(R"({"id":900,"dual_x2":4,"mate":18446744073709551615})"));
  EXPECT_EQ(document["vertices"][4], json::parse(R"({"id":0,"dual_x2":0,"mate":null})"));
  EXPECT_EQ(document["blossoms"][1],
            json::parse(R"({"dual_x2":2,"base":0,
                            "children":[{"blossom":0},{"vertex":7},{"vertex":0}]})"));
}

TEST(CertificateJson, RoundTripsThroughExternalIds) {
  const Certificate original = sample_certificate();
  // Read back against a graph that numbers the same ids in another order.
  const std::vector<std::uint64_t> other_order = {7, 0, 42, 900, 18446744073709551615ULL};
  const formats::IdMap graph_ids(other_order);
  const Certificate read = parse_certificate_json(written(original), graph_ids);

  const auto dense = [&](Vertex original_vertex) { return graph_ids.find(kIds[original_vertex]); };
  EXPECT_EQ(read.mode, original.mode);
  EXPECT_EQ(read.weight_offset, original.weight_offset);
  for (Vertex v = 0; v < kIds.size(); ++v) {
    EXPECT_EQ(read.vertex_dual2[dense(v)], original.vertex_dual2[v]);
    const Vertex mate = original.mate[v];
    EXPECT_EQ(read.mate[dense(v)], mate == kNoVertex ? kNoVertex : dense(mate));
  }
  ASSERT_EQ(read.blossoms.size(), 2u);
  EXPECT_EQ(read.blossoms[0].dual2, 8);
  EXPECT_EQ(read.blossoms[0].base, dense(2));
  EXPECT_EQ(read.blossoms[0].children, (std::vector<NodeId>{dense(0), dense(1), dense(2)}));
  EXPECT_EQ(read.blossoms[1].children, (std::vector<NodeId>{5 + 0, dense(3), dense(4)}));
}

// Format 1 is format 2 with each doubled dual under "dual2": such files still verify, and a
// document that mixes the two names is refused.
json renamed_duals(json document, const char* key) {
  for (json& vertex : document["vertices"]) {
    vertex[key] = vertex["dual_x2"];
    vertex.erase("dual_x2");
  }
  for (json& blossom : document["blossoms"]) {
    blossom[key] = blossom["dual_x2"];
    blossom.erase("dual_x2");
  }
  return document;
}

TEST(CertificateJson, ReadsFormatOne) {
  json v1 = renamed_duals(json::parse(written(sample_certificate())), "dual2");
  v1["format"] = "yoke-certificate/1";
  const Certificate read = parse_certificate_json(v1.dump(), formats::IdMap(kIds));
  EXPECT_EQ(read.vertex_dual2, sample_certificate().vertex_dual2);
  EXPECT_EQ(read.blossoms[0].dual2, 8);
  EXPECT_EQ(read.blossoms[1].dual2, 2);

  json v1_with_new_key = json::parse(written(sample_certificate()));
  v1_with_new_key["format"] = "yoke-certificate/1";
  EXPECT_EQ(error_of(v1_with_new_key.dump()),
            "format: format 1 names the doubled duals \"dual2\", not \"dual_x2\"");
  json v2_with_old_key = renamed_duals(json::parse(written(sample_certificate())), "dual2");
  EXPECT_EQ(error_of(v2_with_old_key.dump()),
            "format: format 2 names the doubled duals \"dual_x2\", not \"dual2\"");
}

TEST(CertificateJson, IgnoresUnknownKeys) {
  const std::string text = edited([](json& d) {
    d["produced_by"] = "a later yoke";
    d["vertices"][0]["note"] = 1;
  });
  EXPECT_NO_THROW(parse_certificate_json(text, formats::IdMap(kIds)));
}

TEST(CertificateJson, RejectsWhatIsNotACertificate) {
  EXPECT_NE(error_of("{\"format\": ").find("not valid JSON"), std::string::npos);
  EXPECT_EQ(error_of("[1, 2]"), "expected a JSON object");
  EXPECT_EQ(error_of(edited([](json& d) { d["format"] = "yoke-certificate/9"; })),
            "format: expected \"yoke-certificate/2\" (or \"yoke-certificate/1\"), found "
            "\"yoke-certificate/9\"");
  EXPECT_EQ(error_of(edited([](json& d) { d.erase("mode"); })), "mode: missing");
  EXPECT_NE(error_of(edited([](json& d) { d["mode"] = "fastest"; })).find("mode: unknown mode"),
            std::string::npos);
  EXPECT_EQ(error_of(edited([](json& d) { d["weight_offset"] = 1.5; })),
            "weight_offset: expected an integer");
  EXPECT_EQ(error_of(edited([](json& d) { d["vertices"] = 3; })), "vertices: expected an array");
}

TEST(CertificateJson, RejectsBadVertexEntries) {
  EXPECT_EQ(error_of(edited([](json& d) { d["vertices"][2].erase("dual_x2"); })),
            "vertices[2].dual_x2: missing");
  EXPECT_EQ(error_of(edited([](json& d) { d["vertices"][2]["dual_x2"] = "4"; })),
            "vertices[2].dual_x2: expected an integer");
  EXPECT_EQ(error_of(edited([](json& d) { d["vertices"][2]["dual_x2"] = 9223372036854775808ULL; })),
            "vertices[2].dual_x2: out of the 64-bit signed range");
  EXPECT_EQ(error_of(edited([](json& d) { d["vertices"][1]["id"] = -1; })),
            "vertices[1].id: expected a non-negative integer vertex id");
}

TEST(CertificateJson, RejectsIdsThatDoNotMatchTheGraph) {
  EXPECT_EQ(error_of(edited([](json& d) { d["vertices"][3]["id"] = 8; })),
            "vertices[3].id: vertex 8 is not in the graph");
  EXPECT_EQ(error_of(edited([](json& d) { d["vertices"][3]["mate"] = 8; })),
            "vertices[3].mate: vertex 8 is not in the graph");
  EXPECT_EQ(error_of(edited([](json& d) { d["vertices"][3]["id"] = 42; })),
            "vertices[3].id: vertex 42 is listed twice");
  EXPECT_EQ(error_of(edited([](json& d) { d["vertices"].erase(3); })),
            "graph vertex 7 has no entry in \"vertices\"");
  EXPECT_EQ(error_of(edited([](json& d) { d["blossoms"][0]["base"] = 8; })),
            "blossoms[0].base: vertex 8 is not in the graph");
}

TEST(CertificateJson, RejectsBadBlossomChildren) {
  EXPECT_EQ(error_of(edited([](json& d) { d["blossoms"][1]["children"][0] = {{"blossom", 2}}; })),
            "blossoms[1].children[0].blossom: blossom 2 does not exist (there are 2)");
  EXPECT_EQ(error_of(edited([](json& d) { d["blossoms"][1]["children"][1] = {{"vertex", 8}}; })),
            "blossoms[1].children[1].vertex: vertex 8 is not in the graph");
  EXPECT_EQ(error_of(edited([](json& d) {
              d["blossoms"][1]["children"][1] = {{"vertex", 7}, {"blossom", 0}};
            })),
            "blossoms[1].children[1]: expected exactly one of \"vertex\" and \"blossom\"");
  EXPECT_EQ(error_of(edited([](json& d) { d["blossoms"][0]["children"] = {1, 2}; })),
            "blossoms[0].children[0]: expected {\"vertex\":U} or {\"blossom\":K}");
}

TEST(CertificateJson, DamagedTextIsReadOrRejectedCleanly) {
  // Each round changes a few bytes of a valid certificate: the reader either accepts the result
  // or throws CertificateFormatError, never anything else.
  const std::string valid = written(sample_certificate());
  const std::string replacements = "{}[],:\"0123456789-.nulltrue ";
  std::mt19937 random(11);
  for (int round = 0; round < 3000; ++round) {
    std::string text = valid;
    for (int edits = 1 + static_cast<int>(random() % 3); edits > 0; --edits) {
      const std::size_t at = random() % text.size();
      if (random() % 2) {
        text.erase(at, 1);
      } else {
        text[at] = replacements[random() % replacements.size()];
      }
    }
    try {
      parse_certificate_json(text, formats::IdMap(kIds));
    } catch (const CertificateFormatError&) {
    }
  }
}

}  // namespace
}  // namespace yoke::cli
