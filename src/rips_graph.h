/* rips_graph.h — the neighbour graph of a space at a scale (private to
 * the library): every pair whose Rips edge value is at most T, i.e. whose
 * balls meet at T (DESIGN §2.3). The scale search, the main job and the
 * unfilled triangles all start from it.
 */
#ifndef NERVEGAP_RIPS_GRAPH_H
#define NERVEGAP_RIPS_GRAPH_H

#include "nervegap/kdtree.h"
#include "nervegap/values.h"

/* Builds the graph of the pairs of s with Rips edge value ≤ T into *out
 * (symmetric, sorted lists, with distances; caller frees with ng_csr_free).
 * from, when not NULL, is the graph at a scale ≥ T: the result is then
 * that graph filtered, without any search. max_edges > 0 stops the work
 * as soon as the graph would hold more than max_edges edges: *over is then
 * 1 and *out empty. *edges (when not NULL) receives the number of edges
 * found (a lower bound when over). Returns NG_OK or NG_ERR_NOMEM. */
int ng_rips_graph(const ng_space *s, double T, const ng_csr *from,
                  size_t max_edges, int threads, ng_csr *out, int *over,
                  size_t *edges, ng_error *err);

#endif
