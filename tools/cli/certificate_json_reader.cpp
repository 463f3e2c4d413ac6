// Reads the certificate JSON in one streaming pass (nlohmann's SAX interface): a certificate
// of 3x10^5 vertices holds ~10^6 values, and a DOM of them costs about twice the time and
// several times the memory of the certificate itself.
#include <limits>
#include <nlohmann/json.hpp>
#include <string>

#include "certificate_json.h"

namespace yoke::cli {
namespace {

using json = nlohmann::json;

constexpr std::size_t kNone = std::numeric_limits<std::size_t>::max();

// Where in the document a value sits, formatted only when an error is reported.
struct Where {
  const char* array = nullptr;  // "vertices", "blossoms", or nullptr at the top level
  std::size_t index = 0;
  std::size_t child = kNone;  // index inside "children", if there
  const char* field = nullptr;

  std::string text() const {
    std::string out;
    if (array) out = std::string(array) + "[" + std::to_string(index) + "]";
    if (child != kNone) out += ".children[" + std::to_string(child) + "]";
    if (field) out += (out.empty() ? "" : ".") + std::string(field);
    return out;
  }
};

[[noreturn]] void fail(const Where& where, const std::string& problem) {
  throw CertificateFormatError(where.text() + ": " + problem);
}

// One JSON scalar as the SAX parser delivers it.
struct Scalar {
  enum class Kind { null, boolean, negative, non_negative, fraction, text };
  Kind kind;
  std::int64_t negative = 0;
  std::uint64_t non_negative = 0;
  const std::string* text = nullptr;

  std::int64_t as_int64(const Where& where) const {
    if (kind == Kind::negative) return negative;
    if (kind != Kind::non_negative) fail(where, "expected an integer");
    if (non_negative > static_cast<std::uint64_t>(std::numeric_limits<std::int64_t>::max())) {
      fail(where, "out of the 64-bit signed range");
    }
    return static_cast<std::int64_t>(non_negative);
  }

  std::uint64_t as_id(const Where& where) const {
    if (kind != Kind::non_negative) fail(where, "expected a non-negative integer vertex id");
    return non_negative;
  }

  const std::string& as_text(const Where& where) const {
    if (kind != Kind::text) fail(where, "expected a string");
    return *text;
  }
};

// nlohmann's messages start with "[json.exception.parse_error.101] "; users need the rest.
std::string without_exception_tag(const std::string& message) {
  if (!message.starts_with("[json.exception.")) return message;
  const std::size_t end = message.find("] ");
  return end == std::string::npos ? message : message.substr(end + 2);
}

// Receives the parser's events and fills a Certificate. Values under keys it does not know
// are skipped whole. Field presence and cross references are checked in finish().
class CertificateSax {
 public:
  explicit CertificateSax(const formats::IdMap& graph_ids) : graph_ids_(graph_ids) {
    cert_.mate.assign(graph_ids.size(), kNoVertex);
    cert_.vertex_dual2.assign(graph_ids.size(), 0);
    listed_.assign(graph_ids.size(), false);
  }

  // The SAX interface of nlohmann::json.
  bool null() { return scalar({Scalar::Kind::null}); }
  bool boolean(bool) { return scalar({Scalar::Kind::boolean}); }
  bool number_integer(std::int64_t value) { return scalar({Scalar::Kind::negative, value}); }
  bool number_unsigned(std::uint64_t value) {
    return scalar({Scalar::Kind::non_negative, 0, value});
  }
  bool number_float(double, const std::string&) { return scalar({Scalar::Kind::fraction}); }
  bool string(std::string& value) { return scalar({Scalar::Kind::text, 0, 0, &value}); }
  bool binary(json::binary_t&) { return scalar({Scalar::Kind::null}); }
  bool start_object(std::size_t) { return start(true); }
  bool start_array(std::size_t) { return start(false); }
  bool end_object() { return end(); }
  bool end_array() { return end(); }
  bool key(std::string& name) {
    if (skip_depth_ == 0) key_ = name;
    return true;
  }
  bool parse_error(std::size_t, const std::string&, const nlohmann::detail::exception& error) {
    throw CertificateFormatError("not valid JSON: " + without_exception_tag(error.what()));
  }

  Certificate finish();

 private:
  // The containers the reader is inside, outermost first.
  enum class Scope { top, vertices, vertex, blossoms, blossom, children, child };

  struct VertexEntry {
    Vertex vertex = kNoVertex;
    bool has_dual2 = false;
    bool has_mate = false;
    std::int64_t dual2 = 0;
    Vertex mate = kNoVertex;
  };
  struct BlossomEntry {
    bool has_dual2 = false;
    bool has_base = false;
    bool has_children = false;
  };
  struct ChildEntry {
    bool has_vertex = false;
    bool has_blossom = false;
    NodeId node = 0;
  };
  // A {"blossom":K} child, checked against the blossom count once it is known.
  struct BlossomReference {
    std::size_t blossom;
    std::size_t child;
    std::uint64_t k;
  };

  Scope scope() const { return scopes_.back(); }
  Where where(const char* field = nullptr) const;
  Where newest_element() const;
  Vertex graph_vertex(const Scalar& value, const Where& at) const;

  bool scalar(const Scalar& value);
  bool start(bool is_object);
  bool end();
  void top_field(const Scalar& value);
  void vertex_field(const Scalar& value);
  void blossom_field(const Scalar& value);
  void child_field(const Scalar& value);
  void finish_vertex();
  void finish_blossom();
  void finish_child();
  // A doubled dual's key: "dual_x2", or "dual2" in format 1.
  bool is_dual_key() const { return key_ == "dual_x2" || key_ == "dual2"; }
  void note_dual_key() { (key_ == "dual2" ? saw_dual2_key_ : saw_dual_x2_key_) = true; }

  const formats::IdMap& graph_ids_;
  Certificate cert_;
  std::vector<bool> listed_;
  std::vector<Scope> scopes_;
  std::size_t skip_depth_ = 0;  // > 0 while inside a value under an unknown key
  std::string key_;

  bool has_format_ = false, has_mode_ = false, has_offset_ = false;
  bool format_v1_ = false;  // "yoke-certificate/1": duals under "dual2"
  // The dual keys met, checked against the format at the end (the format may come last).
  bool saw_dual2_key_ = false, saw_dual_x2_key_ = false;
  bool has_vertices_ = false, has_blossoms_ = false;
  std::size_t vertex_index_ = 0;  // entries seen so far in "vertices"
  std::size_t child_index_ = 0;   // entries seen so far in the current "children"
  VertexEntry vertex_;
  BlossomEntry blossom_;
  ChildEntry child_;
  std::vector<BlossomReference> blossom_references_;
};

Where CertificateSax::where(const char* field) const {
  Where at;
  at.field = field;
  for (const Scope s : scopes_) {
    if (s == Scope::vertex) at = {"vertices", vertex_index_ - 1, kNone, field};
    if (s == Scope::blossom) at = {"blossoms", cert_.blossoms.size() - 1, kNone, field};
    if (s == Scope::child) at.child = child_index_ - 1;
  }
  return at;
}

// The element just opened in the array the reader is in (vertices, blossoms or children).
Where CertificateSax::newest_element() const {
  Where at = where();
  if (scope() == Scope::vertices) at = {"vertices", vertex_index_ - 1};
  if (scope() == Scope::blossoms) at = {"blossoms", cert_.blossoms.size() - 1};
  if (scope() == Scope::children) at.child = child_index_ - 1;
  return at;
}

Vertex CertificateSax::graph_vertex(const Scalar& value, const Where& at) const {
  const std::uint64_t id = value.as_id(at);
  const Vertex v = graph_ids_.find(id);
  if (v == kNoVertex) fail(at, "vertex " + std::to_string(id) + " is not in the graph");
  return v;
}

bool CertificateSax::scalar(const Scalar& value) {
  if (skip_depth_ > 0) return true;
  if (scopes_.empty()) throw CertificateFormatError("expected a JSON object");
  switch (scope()) {
    case Scope::top: top_field(value); break;
    case Scope::vertex: vertex_field(value); break;
    case Scope::blossom: blossom_field(value); break;
    case Scope::child: child_field(value); break;
    case Scope::vertices:
      ++vertex_index_;
      fail(newest_element(), "expected an object");
    case Scope::blossoms:
      cert_.blossoms.emplace_back();
      fail(newest_element(), "expected an object");
    case Scope::children:
      ++child_index_;
      fail(newest_element(), "expected {\"vertex\":U} or {\"blossom\":K}");
  }
  return true;
}

bool CertificateSax::start(bool is_object) {
  if (skip_depth_ > 0) {
    ++skip_depth_;
    return true;
  }
  if (scopes_.empty()) {
    if (!is_object) throw CertificateFormatError("expected a JSON object");
    scopes_.push_back(Scope::top);
    return true;
  }
  // The container a known key or array position calls for, and what to say otherwise.
  Scope next = Scope::top;
  bool wants_object = false;
  switch (scope()) {
    case Scope::top:
      if (key_ == "vertices") {
        next = Scope::vertices;
        has_vertices_ = true;
      } else if (key_ == "blossoms") {
        next = Scope::blossoms;
        has_blossoms_ = true;
      } else if (key_ == "format" || key_ == "mode" || key_ == "weight_offset") {
        fail(where(key_.c_str()), "expected a scalar value");
      } else {
        skip_depth_ = 1;
        return true;
      }
      if (is_object) fail(where(key_.c_str()), "expected an array");
      scopes_.push_back(next);
      return true;
    case Scope::vertices:
      ++vertex_index_;
      vertex_ = {};
      next = Scope::vertex;
      wants_object = true;
      break;
    case Scope::blossoms:
      cert_.blossoms.emplace_back();
      blossom_ = {};
      next = Scope::blossom;
      wants_object = true;
      break;
    case Scope::blossom:
      if (key_ != "children") break;
      if (is_object) fail(where("children"), "expected an array");
      blossom_.has_children = true;
      child_index_ = 0;
      scopes_.push_back(Scope::children);
      return true;
    case Scope::children:
      ++child_index_;
      child_ = {};
      if (!is_object) fail(newest_element(), "expected {\"vertex\":U} or {\"blossom\":K}");
      scopes_.push_back(Scope::child);
      return true;
    case Scope::vertex:
    case Scope::child:
      break;
  }
  if (wants_object) {
    if (!is_object) fail(newest_element(), "expected an object");
    scopes_.push_back(next);
    return true;
  }
  // A container under a key of a vertex, blossom or child: scalars are expected for the
  // known keys, anything goes under unknown ones.
  const bool known =
      (scope() == Scope::vertex && (key_ == "id" || is_dual_key() || key_ == "mate")) ||
      (scope() == Scope::blossom && (is_dual_key() || key_ == "base")) ||
      (scope() == Scope::child && (key_ == "vertex" || key_ == "blossom"));
  if (known) fail(where(key_.c_str()), "expected a scalar value");
  skip_depth_ = 1;
  return true;
}

bool CertificateSax::end() {
  if (skip_depth_ > 0) {
    --skip_depth_;
    return true;
  }
  switch (scope()) {
    case Scope::vertex: finish_vertex(); break;
    case Scope::blossom: finish_blossom(); break;
    case Scope::child: finish_child(); break;
    default: break;
  }
  scopes_.pop_back();
  return true;
}

void CertificateSax::top_field(const Scalar& value) {
  if (key_ == "format") {
    has_format_ = true;
    const bool text = value.kind == Scalar::Kind::text;
    format_v1_ = text && *value.text == kCertificateFormatV1;
    if (!format_v1_ && (!text || *value.text != kCertificateFormat)) {
      const std::string found = text ? json(*value.text).dump() : "a non-string";
      fail(where("format"), "expected \"" + std::string(kCertificateFormat) + "\" (or \"" +
                                std::string(kCertificateFormatV1) + "\"), found " + found);
    }
  } else if (key_ == "mode") {
    has_mode_ = true;
    try {
      cert_.mode = parse_mode(value.as_text(where("mode")));
    } catch (const InputError& error) {
      fail(where("mode"), error.what());
    }
  } else if (key_ == "weight_offset") {
    has_offset_ = true;
    cert_.weight_offset = value.as_int64(where("weight_offset"));
  } else if (key_ == "vertices" || key_ == "blossoms") {
    fail(where(key_.c_str()), "expected an array");
  }
}

void CertificateSax::vertex_field(const Scalar& value) {
  if (key_ == "id") {
    vertex_.vertex = graph_vertex(value, where("id"));
    if (listed_[vertex_.vertex]) {
      fail(where("id"), "vertex " + std::to_string(graph_ids_.ids()[vertex_.vertex]) +
                            " is listed twice");
    }
    listed_[vertex_.vertex] = true;
  } else if (is_dual_key()) {
    note_dual_key();
    vertex_.has_dual2 = true;
    vertex_.dual2 = value.as_int64(where(key_.c_str()));
  } else if (key_ == "mate") {
    vertex_.has_mate = true;
    vertex_.mate =
        value.kind == Scalar::Kind::null ? kNoVertex : graph_vertex(value, where("mate"));
  }
}

void CertificateSax::finish_vertex() {
  if (vertex_.vertex == kNoVertex) fail(where("id"), "missing");
  if (!vertex_.has_dual2) fail(where("dual_x2"), "missing");
  if (!vertex_.has_mate) fail(where("mate"), "missing");
  cert_.vertex_dual2[vertex_.vertex] = vertex_.dual2;
  cert_.mate[vertex_.vertex] = vertex_.mate;
}

void CertificateSax::blossom_field(const Scalar& value) {
  CertificateBlossom& blossom = cert_.blossoms.back();
  if (is_dual_key()) {
    note_dual_key();
    blossom_.has_dual2 = true;
    blossom.dual2 = value.as_int64(where(key_.c_str()));
  } else if (key_ == "base") {
    blossom_.has_base = true;
    blossom.base = graph_vertex(value, where("base"));
  } else if (key_ == "children") {
    fail(where("children"), "expected an array");
  }
}

void CertificateSax::finish_blossom() {
  if (!blossom_.has_dual2) fail(where("dual_x2"), "missing");
  if (!blossom_.has_base) fail(where("base"), "missing");
  if (!blossom_.has_children) fail(where("children"), "missing");
}

void CertificateSax::child_field(const Scalar& value) {
  if (key_ == "vertex") {
    child_.has_vertex = true;
    child_.node = graph_vertex(value, where("vertex"));
  } else if (key_ == "blossom") {
    child_.has_blossom = true;
    const std::uint64_t k = value.as_id(where("blossom"));
    blossom_references_.push_back({cert_.blossoms.size() - 1, child_index_ - 1, k});
  }
}

void CertificateSax::finish_child() {
  if (child_.has_vertex == child_.has_blossom) {
    fail(where(), "expected exactly one of \"vertex\" and \"blossom\"");
  }
  // A blossom child's node id is set in finish(), when the number of blossoms is known.
  cert_.blossoms.back().children.push_back(child_.has_vertex ? child_.node : kNoVertex);
}

Certificate CertificateSax::finish() {
  if (!has_format_) fail(where("format"), "missing");
  if (format_v1_ ? saw_dual_x2_key_ : saw_dual2_key_) {
    fail(where("format"), format_v1_
                              ? "format 1 names the doubled duals \"dual2\", not \"dual_x2\""
                              : "format 2 names the doubled duals \"dual_x2\", not \"dual2\"");
  }
  if (!has_mode_) fail(where("mode"), "missing");
  if (!has_offset_) fail(where("weight_offset"), "missing");
  if (!has_vertices_) fail(where("vertices"), "missing");
  if (!has_blossoms_) fail(where("blossoms"), "missing");

  const std::size_t n = graph_ids_.size();
  for (std::size_t v = 0; v < n; ++v) {
    if (!listed_[v]) {
      throw CertificateFormatError("graph vertex " + std::to_string(graph_ids_.ids()[v]) +
                                   " has no entry in \"vertices\"");
    }
  }

  const std::size_t count = cert_.blossoms.size();
  // Node ids n + k must fit in NodeId.
  if (n + count > std::numeric_limits<NodeId>::max()) {
    throw CertificateFormatError("blossoms: too many blossoms");
  }
  for (const BlossomReference& ref : blossom_references_) {
    if (ref.k >= count) {
      fail({"blossoms", ref.blossom, ref.child, "blossom"},
           "blossom " + std::to_string(ref.k) + " does not exist (there are " +
               std::to_string(count) + ")");
    }
    cert_.blossoms[ref.blossom].children[ref.child] = static_cast<NodeId>(n + ref.k);
  }
  return std::move(cert_);
}

}  // namespace

Certificate parse_certificate_json(std::string_view text, const formats::IdMap& graph_ids) {
  CertificateSax reader(graph_ids);
  json::sax_parse(text.begin(), text.end(), &reader);
  return reader.finish();
}

}  // namespace yoke::cli
