#include "gen_command.h"

#include <algorithm>
#include <functional>
#include <iostream>
#include <memory>
#include <stdexcept>
#include <vector>

#include "cli_error.h"
#include "file_io.h"
#include "number_options.h"
#include "yoke/pool.h"
#include "tools/formats/edge_list_writer.h"
#include "tools/formats/event_script_writer.h"
#include "tools/graphgen/event_stream.h"
#include "tools/graphgen/generators.h"

namespace yoke::cli {
namespace {

// A generated graph and the canonical command that reproduces it (written as a comment).
struct Generated {
  gen::GeneratedGraph graph;
  std::string recipe;
  std::string note;  // an extra comment line about the vertex numbering, or empty
};

std::string str(std::uint64_t value) { return std::to_string(value); }
std::string str(std::int64_t value) { return std::to_string(value); }
std::string str(int value) { return std::to_string(value); }

void require_vertex_count(std::uint64_t count) {
  if (count >= kNoVertex) {
    throw CliError("gen: at most " + str(std::uint64_t{kNoVertex} - 1) + " vertices");
  }
}

void require_weight_range(Weight min_weight, Weight max_weight) {
  if (min_weight > max_weight) {
    throw CliError("gen: --min-weight " + str(min_weight) + " is above --max-weight " +
                   str(max_weight));
  }
}

// n (n - 1) / 2 without overflow for any n below 2^32.
std::uint64_t pair_count(std::uint64_t n) { return n < 2 ? 0 : n * (n - 1) / 2; }

Generated generate_city(const GenOptions& o) {
  require_vertex_count(o.city.vertices);
  return {gen::city(o.city.vertices, o.city.neighbours, o.seed),
          "city --vertices " + str(o.city.vertices) + " --neighbours " + str(o.city.neighbours),
          ""};
}

Generated generate_random(const GenOptions& o) {
  const auto& r = o.random;
  require_vertex_count(r.vertices);
  require_weight_range(r.min_weight, r.max_weight);
  if (r.edges > pair_count(r.vertices)) {
    throw CliError("gen: " + str(r.vertices) + " vertices hold at most " +
                   str(pair_count(r.vertices)) + " edges, asked for " + str(r.edges));
  }
  return {gen::sparse_random(r.vertices, r.edges, r.min_weight, r.max_weight, o.seed),
          "random --vertices " + str(r.vertices) + " --edges " + str(r.edges) +
              " --min-weight " + str(r.min_weight) + " --max-weight " + str(r.max_weight),
          ""};
}

Generated generate_dispatch(const GenOptions& o) {
  const auto& d = o.dispatch;
  require_vertex_count(d.couriers);
  require_vertex_count(d.orders);
  require_vertex_count(d.couriers + d.orders);
  return {gen::dispatch_bipartite(d.couriers, d.orders, d.per_order, o.seed),
          "dispatch --couriers " + str(d.couriers) + " --orders " + str(d.orders) +
              " --per-order " + str(d.per_order),
          "vertices below " + str(d.couriers) + " are couriers, the others orders"};
}

Generated generate_complete(const GenOptions& o) {
  const auto& c = o.complete;
  require_vertex_count(c.vertices);
  require_weight_range(c.min_weight, c.max_weight);
  if (pair_count(c.vertices) >= kNoEdge) {
    throw CliError("gen: a complete graph on " + str(c.vertices) +
                   " vertices has too many edges");
  }
  return {gen::complete(c.vertices, c.min_weight, c.max_weight, o.seed),
          "complete --vertices " + str(c.vertices) + " --min-weight " + str(c.min_weight) +
              " --max-weight " + str(c.max_weight),
          ""};
}

Generated generate_stress(const GenOptions& o) {
  require_vertex_count(o.stress.vertices);
  return {gen::blossom_stress(o.stress.vertices, o.seed),
          "stress --vertices " + str(o.stress.vertices), ""};
}

Generated generate(const GenOptions& o) {
  if (o.family == "city") return generate_city(o);
  if (o.family == "random") return generate_random(o);
  if (o.family == "dispatch") return generate_dispatch(o);
  if (o.family == "complete") return generate_complete(o);
  if (o.family == "stress") return generate_stress(o);
  throw CliError("gen: unknown family '" + o.family + "'");
}

// Vertices without edges cannot appear in an edge list; the header says how many there are.
std::size_t isolated_vertices(const gen::GeneratedGraph& graph) {
  std::vector<bool> touched(graph.vertex_count, false);
  for (const Edge& e : graph.edges) touched[e.a] = touched[e.b] = true;
  return static_cast<std::size_t>(std::count(touched.begin(), touched.end(), false));
}

void write_generated(std::ostream& out, const Generated& generated, std::uint64_t seed) {
  const std::size_t isolated = isolated_vertices(generated.graph);
  out << "# yoke gen " << generated.recipe << " --seed " << seed << "\n"
      << "# " << generated.graph.vertex_count << " vertices";
  if (isolated > 0) out << " (" << isolated << " without edges, so absent below)";
  out << ", " << generated.graph.edges.size() << " edges\n";
  if (!generated.note.empty()) out << "# " << generated.note << "\n";
  formats::write_edge_list(out, generated.graph.edges);
}

gen::StreamSpec stream_spec(const GenOptions& o) {
  const auto& s = o.stream;
  require_vertex_count(s.vertices);
  if (s.batch_max != 0 && s.batch_max < s.batch) {
    throw CliError("gen stream: --batch-max " + str(s.batch_max) + " is below --batch " +
                   str(s.batch));
  }
  gen::StreamSpec spec;
  try {
    spec.family = gen::parse_stream_family(s.family);
    spec.mix = gen::parse_mix(s.mix);
  } catch (const std::invalid_argument& error) {
    throw CliError(std::string("gen stream: ") + error.what());
  }
  spec.vertices = s.vertices;
  spec.seed = o.seed;
  spec.scrambled_keys = s.scrambled_keys;
  spec.events = s.events;
  spec.batch_min = s.batch;
  spec.batch_max = s.batch_max == 0 ? s.batch : s.batch_max;
  spec.degree = s.degree;
  spec.action_batches = s.action_batches;
  spec.weight_grain = s.weight_grain;
  return spec;
}

// The preset's name, or the shares spelled out.
std::string mix_recipe(const gen::EventMix& mix) {
  if (mix == gen::benchmark_mix()) return "bench";
  if (mix == gen::test_mix()) return "test";
  if (mix == gen::tail_mix()) return "tail";
  return gen::mix_text(mix);
}

std::string stream_recipe(const gen::StreamSpec& spec) {
  std::string recipe = std::string("stream ") + gen::stream_family_name(spec.family) +
                       " --vertices " + str(spec.vertices) + " --events " + str(spec.events);
  if (!spec.action_batches) recipe += " --batch " + str(spec.batch_min);
  if (!spec.action_batches && spec.batch_max != spec.batch_min) {
    recipe += " --batch-max " + str(spec.batch_max);
  }
  recipe += " --mix " + mix_recipe(spec.mix);
  if (spec.scrambled_keys) recipe += " --scrambled-keys";
  if (spec.degree != gen::StreamSpec{}.degree) recipe += " --degree " + str(spec.degree);
  if (spec.action_batches) recipe += " --action-batches";
  if (spec.weight_grain > 1) recipe += " --weight-grain " + str(spec.weight_grain);
  return recipe;
}

// The stream is drawn batch by batch: millions of events never sit in memory at once.
void write_stream(std::ostream& out, const gen::StreamSpec& spec) {
  std::unique_ptr<gen::EventStream> stream;
  try {
    stream = std::make_unique<gen::EventStream>(spec);
  } catch (const std::invalid_argument& error) {
    throw CliError(std::string("gen stream: ") + error.what());
  }
  out << "# yoke gen " << stream_recipe(spec) << " --seed " << spec.seed << "\n"
      << "# first batch: the base graph, " << stream->base_vertices() << " vertices and "
      << stream->base_edges() << " edges; then " << spec.events
      << (spec.action_batches ? " actions, one per batch\n" : " events\n");
  // Aimed actions look at a max-weight pool fed every batch as it is drawn.
  std::unique_ptr<Pool> aim;
  if (gen::mix_is_aimed(spec.mix)) {
    aim = std::make_unique<Pool>(Mode::max_weight);
    stream->aim_at(aim.get());
    out << "# aimed at a max-weight pool fed the same batches\n";
  }
  std::vector<yoke::Event> batch;
  while (stream->next_batch(batch)) {
    formats::write_event_script(out, batch);
    if (aim) aim->commit(batch);
  }
}

// Runs `write` on stdout or on the file, and reports a failed write of `what`.
void write_output(const std::string& path, const std::string& what,
                  const std::function<void(std::ostream&)>& write) {
  if (path == "-") {
    write(std::cout);
    std::cout.flush();
    if (!std::cout) throw CliError("cannot write " + what + " to stdout");
  } else {
    std::ofstream out = open_output_file(path);
    write(out);
    close_output_file(out, path);
  }
}

CLI::App* add_family(CLI::App& gen_command, GenOptions& options, const std::string& name,
                     const std::string& description) {
  CLI::App* family = gen_command.add_subcommand(name, description);
  family->add_option("--seed", options.seed, "Random seed; the same seed gives the same graph")
      ->check(kNotNegative)
      ->capture_default_str();
  family->add_option("-o,--output", options.output_path, "Output file, or - for stdout")
      ->capture_default_str();
  family->callback([&options, name] { options.family = name; });
  return family;
}

void add_count(CLI::App* family, const std::string& flag, std::size_t& count,
               const std::string& description) {
  family->add_option(flag, count, description)->check(kNotNegative)->capture_default_str();
}

void add_positive(CLI::App* family, const std::string& flag, int& value,
                  const std::string& description) {
  family->add_option(flag, value, description)->check(kAtLeastOne)->capture_default_str();
}

void add_weight_range(CLI::App* family, Weight& min_weight, Weight& max_weight) {
  family->add_option("--min-weight", min_weight, "Smallest edge weight")->capture_default_str();
  family->add_option("--max-weight", max_weight, "Largest edge weight")->capture_default_str();
}

}  // namespace

CLI::App* add_gen_command(CLI::App& app, GenOptions& options) {
  CLI::App* command =
      app.add_subcommand("gen", "Write a seeded graph of a test family as an edge list");
  command->require_subcommand(1);

  CLI::App* city = add_family(*command, options, "city",
                              "Vardolune street points linked to their nearest neighbours");
  add_count(city, "--vertices", options.city.vertices, "Number of points");
  add_positive(city, "--neighbours", options.city.neighbours, "Links per point (about)");

  CLI::App* random =
      add_family(*command, options, "random", "Distinct random pairs, uniform weights");
  add_count(random, "--vertices", options.random.vertices, "Number of vertices");
  add_count(random, "--edges", options.random.edges, "Number of edges");
  add_weight_range(random, options.random.min_weight, options.random.max_weight);

  CLI::App* dispatch = add_family(*command, options, "dispatch",
                                  "Couriers and orders of Vardolune (bipartite)");
  add_count(dispatch, "--couriers", options.dispatch.couriers, "Number of couriers");
  add_count(dispatch, "--orders", options.dispatch.orders, "Number of orders");
  add_positive(dispatch, "--per-order", options.dispatch.per_order,
               "Nearby couriers linked to each order");

  CLI::App* complete =
      add_family(*command, options, "complete", "Complete graph, uniform weights");
  add_count(complete, "--vertices", options.complete.vertices, "Number of vertices");
  add_weight_range(complete, options.complete.min_weight, options.complete.max_weight);

  CLI::App* stress = add_family(*command, options, "stress",
                                "Nested odd cycles, ties, zero and negative weights");
  add_count(stress, "--vertices", options.stress.vertices, "Number of vertices (about)");

  CLI::App* stream = add_family(*command, options, "stream",
                                "An event script on a graph of FAMILY: the graph, then changes");
  stream->add_option("family", options.stream.family, "city, random, dispatch, complete or stress")
      ->required()
      ->check(CLI::IsMember({"city", "random", "dispatch", "complete", "stress"}));
  add_count(stream, "--vertices", options.stream.vertices, "Vertices of the base graph");
  add_count(stream, "--events", options.stream.events, "Events after the first batch");
  stream->add_option("--batch", options.stream.batch,
                     "Events per batch (the smallest, with --batch-max)")
      ->check(kAtLeastOne)
      ->capture_default_str();
  add_count(stream, "--batch-max", options.stream.batch_max,
            "Largest batch: sizes uniform in [--batch, --batch-max]");
  stream->add_option("--mix", options.stream.mix,
                     "bench, test, or NAME=SHARE,... (shares of the actions drawn after the "
                     "graph):\n"
                     "  nudge-weight   an edge's weight moves by 1..5% of the weight range\n"
                     "  random-weight  an edge gets a new weight, uniform over the range\n"
                     "  add            a new vertex with edges to vertices near it\n"
                     "  remove         a vertex leaves (matched or not)\n"
                     "  unset          an edge is removed\n"
                     "  link           a new edge between two vertices near each other\n"
                     "  vertex-burst   2..4 changes at the edges of one vertex, back to back\n"
                     "  add-remove     a vertex is added with 1..3 edges and removed at once\n"
                     "  set-unset      an edge is set and unset at once\n"
                     "  tricky-weight  an edge gets 0, a negative weight, a tie, its own weight\n"
                     "  re-add         a removed vertex's key is added again\n"
                     "  rise           an edge's weight rises by 25..100% of the range\n"
                     "  rise-tight     * the same on a tight edge (unmatched at zero slack, or "
                     "matched)\n"
                     "  rise-cycle     * the same on an edge of a blossom's cycle\n"
                     "  fall-matched   * a matched edge's weight falls by 25..100% of the range\n"
                     "  remove-matched * a matched vertex leaves\n"
                     "(*: aimed at a max-weight pool fed the stream as it is drawn)\n"
                     "bench = nudge-weight=35,random-weight=35,add=15,remove=15; test = the first "
                     "eleven; tail = the large changes and the everyday ones (see DEVELOPERS.md)")
      ->capture_default_str();
  stream->add_flag("--scrambled-keys", options.stream.scrambled_keys,
                   "Scattered 64-bit vertex keys (some near 2^64-1) instead of 0, 1, 2, ...");
  add_positive(stream, "--degree", options.stream.degree,
               "city: neighbours per point; dispatch: couriers per order; random: mean degree");
  stream->add_flag("--action-batches", options.stream.action_batches,
                   "Each batch holds one action's events; --events counts batches");
  stream->add_option("--weight-grain", options.stream.weight_grain,
                     "Round every weight towards zero to a multiple of this: ties everywhere")
      ->check(kAtLeastOne)
      ->capture_default_str();
  return command;
}

int run_gen(const GenOptions& options) {
  if (options.family == "stream") {
    const gen::StreamSpec spec = stream_spec(options);
    write_output(options.output_path, "the event script",
                 [&](std::ostream& out) { write_stream(out, spec); });
    return kExitOk;
  }
  const Generated generated = generate(options);
  write_output(options.output_path, "the graph",
               [&](std::ostream& out) { write_generated(out, generated, options.seed); });
  return kExitOk;
}

}  // namespace yoke::cli
