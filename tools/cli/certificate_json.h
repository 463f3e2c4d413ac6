// The JSON form of a yoke::Certificate, with external vertex ids. The format is documented in
// docs/formats.md, "Certificate":
//
//   {"format":"yoke-certificate/2","mode":"max-weight","weight_offset":0,
//    "vertices":[{"id":U,"dual_x2":D,"mate":V|null},...],
//    "blossoms":[{"dual_x2":Z,"base":U,"children":[{"vertex":U}|{"blossom":K},...]},...]}
#pragma once

#include <cstdint>
#include <ostream>
#include <stdexcept>
#include <string_view>
#include <vector>

#include "yoke/certificate.h"
#include "tools/formats/id_map.h"

namespace yoke::cli {

inline constexpr std::string_view kCertificateFormat = "yoke-certificate/2";
// Still read: the same document with each doubled dual under "dual2" instead of "dual_x2".
inline constexpr std::string_view kCertificateFormatV1 = "yoke-certificate/1";

// Writes `cert` with external_ids[v] in place of each dense vertex v, one vertex or blossom
// per line. Preconditions: cert.mate and cert.vertex_dual2 have external_ids.size() entries.
void write_certificate_json(std::ostream& out, const Certificate& cert,
                            const std::vector<std::uint64_t>& external_ids);

// A certificate that cannot be read, or does not name the same vertices as the graph. The
// message says where (e.g. "vertices[3].mate: ...").
class CertificateFormatError : public std::runtime_error {
 public:
  using std::runtime_error::runtime_error;
};

// Reads a certificate and maps its ids through `graph_ids`. Every graph vertex must have
// exactly one entry, and every id (vertex, mate, base, child) must be a graph vertex. Whether
// the certificate proves anything is left to check_certificate(). Unknown keys are ignored,
// so that later versions can add fields.
Certificate parse_certificate_json(std::string_view text, const formats::IdMap& graph_ids);

}  // namespace yoke::cli
