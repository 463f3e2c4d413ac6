#include "certificate_json.h"

#include <stdexcept>
#include <string>

#include "json_writer.h"

namespace yoke::cli {

void write_certificate_json(std::ostream& out, const Certificate& cert,
                            const std::vector<std::uint64_t>& external_ids) {
  const std::size_t n = external_ids.size();
  if (cert.mate.size() != n || cert.vertex_dual2.size() != n) {
    throw std::logic_error("the certificate covers " + std::to_string(cert.mate.size()) +
                           " vertices, the graph has " + std::to_string(n));
  }
  JsonWriter json(out);
  json.begin_object();
  json.key("format");
  json.string(kCertificateFormat);
  json.key("mode");
  json.string(mode_name(cert.mode));
  json.key("weight_offset");
  json.integer(cert.weight_offset);

  json.key("vertices");
  json.begin_array();
  for (std::size_t v = 0; v < n; ++v) {
    json.line_break();
    json.begin_object();
    json.key("id");
    json.unsigned_integer(external_ids[v]);
    json.key("dual_x2");
    json.integer(cert.vertex_dual2[v]);
    json.key("mate");
    if (cert.mate[v] == kNoVertex) {
      json.null();
    } else {
      json.unsigned_integer(external_ids[cert.mate[v]]);
    }
    json.end_object();
  }
  json.end_array();

  json.key("blossoms");
  json.begin_array();
  for (const CertificateBlossom& blossom : cert.blossoms) {
    json.line_break();
    json.begin_object();
    json.key("dual_x2");
    json.integer(blossom.dual2);
    json.key("base");
    json.unsigned_integer(external_ids[blossom.base]);
    json.key("children");
    json.begin_array();
    for (const NodeId child : blossom.children) {
      json.begin_object();
      if (child < n) {
        json.key("vertex");
        json.unsigned_integer(external_ids[child]);
      } else {
        json.key("blossom");
        json.unsigned_integer(child - n);
      }
      json.end_object();
    }
    json.end_array();
    json.end_object();
  }
  json.end_array();
  json.end_object();
  json.finish();
}

}  // namespace yoke::cli
