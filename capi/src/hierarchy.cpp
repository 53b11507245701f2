// The Schmid-Leiman transformation and the omegas of a general factor through the C ABI.
#include "boundary.hpp"
#include "handles.hpp"
#include "model.hpp"
#include "results.hpp"

#include "lode/schmid_leiman.hpp"

using namespace lode;
using namespace lode::capi;

struct lode_schmid_leiman {
  SchmidLeimanResult result;
};

extern "C" {

LODE_API int lode_schmid_leiman_options_init(lode_schmid_leiman_options* opts, size_t struct_size) {
  return guarded([&] {
    lode_schmid_leiman_options d{};
    d.struct_size = sizeof d;
    d.second_order = LODE_EXTRACTION_MINRES;
    d.max_iterations = 1000;
    d.tolerance = 1e-10;
    init_options(opts, struct_size, d, "lode_schmid_leiman_options");
  });
}

LODE_API int lode_schmid_leiman_compute(const lode_model* model, const lode_schmid_leiman_options* opts,
                                        const int64_t* assignment, int64_t count, lode_schmid_leiman** out) {
  return guarded([&] {
    require_pointer(model, "model");
    require_pointer(out, "out");
    *out = nullptr;
    lode_schmid_leiman_options o{};
    lode_schmid_leiman_options_init(&o, sizeof o);
    if (opts) {
      check_options_size(opts, "lode_schmid_leiman_options");
      LODE_OPTION_FIELD(o, opts, second_order);
      LODE_OPTION_FIELD(o, opts, max_iterations);
      LODE_OPTION_FIELD(o, opts, tolerance);
    }
    SchmidLeimanOptions so;
    so.second_order = extraction_method_of(o.second_order);
    if (so.second_order == ExtractionMethod::principal_components)
      fail(LODE_E_INVALID_ARGUMENT, "the second-order fit must be a factor analysis (ML, principal axis or minimum residual)");
    if (o.max_iterations < 1)
      fail(LODE_E_INVALID_ARGUMENT, fmt::format("max_iterations must be at least 1; it is {}", o.max_iterations));
    if (!(o.tolerance > 0.0 && o.tolerance < 1.0))
      fail(LODE_E_INVALID_ARGUMENT, fmt::format("tolerance must be above 0 and below 1; it is {}", o.tolerance));
    so.max_iterations = o.max_iterations;
    so.tolerance = o.tolerance;
    so.item_names = model->item_names;
    const Index items = model->rotation.pattern.rows();
    if (assignment == nullptr && count != 0)
      fail(LODE_E_INVALID_ARGUMENT, fmt::format("argument 'assignment' is NULL but count is {}", count));
    if (assignment != nullptr) {
      if (count != items) fail(LODE_E_INVALID_ARGUMENT, fmt::format("{} assignments were given for {} items", count, items));
      for (int64_t j = 0; j < count; ++j) so.assignment.push_back(static_cast<Index>(assignment[j]));
    }
    auto r = std::make_unique<lode_schmid_leiman>();
    r->result = schmid_leiman(model->rotation.pattern, model->rotation.factor_correlations, so);
    *out = r.release();
  });
}

LODE_API void lode_schmid_leiman_free(lode_schmid_leiman* result) { delete result; }

LODE_API int lode_schmid_leiman_matrix(const lode_schmid_leiman* result, int key, double* out, size_t capacity,
                                       int64_t* rows, int64_t* cols) {
  return guarded([&] {
    require_pointer(result, "result");
    const auto& r = result->result;
    switch (key) {
      case LODE_SCHMID_LEIMAN_GENERAL: write_matrix(r.general, out, capacity, rows, cols); break;
      case LODE_SCHMID_LEIMAN_GROUP: write_matrix(r.group, out, capacity, rows, cols); break;
      case LODE_SCHMID_LEIMAN_UNIQUENESSES: write_matrix(r.uniquenesses, out, capacity, rows, cols); break;
      case LODE_SCHMID_LEIMAN_SECOND_ORDER_LOADINGS: write_matrix(r.second_order_loadings, out, capacity, rows, cols); break;
      case LODE_SCHMID_LEIMAN_OMEGA_SUBSCALES: write_matrix(r.omega_subscales, out, capacity, rows, cols); break;
      case LODE_SCHMID_LEIMAN_SUBSCALE_OMEGA_TOTAL: write_matrix(r.subscale_omega_total, out, capacity, rows, cols); break;
      case LODE_SCHMID_LEIMAN_ASSIGNMENT: {
        Vector a(static_cast<Index>(r.assignment.size()));
        for (std::size_t i = 0; i < r.assignment.size(); ++i) a(static_cast<Index>(i)) = static_cast<double>(r.assignment[i]);
        write_matrix(a, out, capacity, rows, cols);
        break;
      }
      default: fail(LODE_E_INVALID_ARGUMENT, key_text(key, "lode_schmid_leiman matrix (lode_schmid_leiman_matrix)"));
    }
  });
}

LODE_API int lode_schmid_leiman_value(const lode_schmid_leiman* result, int key, double* value) {
  return guarded([&] {
    require_pointer(result, "result");
    require_pointer(value, "value");
    const auto& r = result->result;
    switch (key) {
      case LODE_SCHMID_LEIMAN_OMEGA_TOTAL: *value = r.omega_total; break;
      case LODE_SCHMID_LEIMAN_OMEGA_HIERARCHICAL: *value = r.omega_hierarchical; break;
      case LODE_SCHMID_LEIMAN_ECV: *value = r.ecv; break;
      case LODE_SCHMID_LEIMAN_SECOND_ORDER_MAX_RESIDUAL: *value = r.second_order_max_residual; break;
      case LODE_SCHMID_LEIMAN_SECOND_ORDER_CONVERGED: *value = r.second_order_convergence.converged ? 1.0 : 0.0; break;
      case LODE_SCHMID_LEIMAN_SECOND_ORDER_ITERATIONS: *value = static_cast<double>(r.second_order_convergence.iterations); break;
      default: fail(LODE_E_INVALID_ARGUMENT, key_text(key, "lode_schmid_leiman number (lode_schmid_leiman_value)"));
    }
  });
}

LODE_API int lode_schmid_leiman_text(const lode_schmid_leiman* result, int key, char* out, size_t capacity,
                                     size_t* length) {
  return guarded([&] {
    require_pointer(result, "result");
    if (key != LODE_SCHMID_LEIMAN_NOTES)
      fail(LODE_E_INVALID_ARGUMENT, key_text(key, "lode_schmid_leiman text (lode_schmid_leiman_text)"));
    write_text(join_lines(result->result.notes), out, capacity, length);
  });
}

}  // extern "C"
