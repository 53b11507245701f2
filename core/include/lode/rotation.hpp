// Factor rotation: one gradient projection engine (Jennrich 2001 orthogonal, Jennrich 2002 oblique,
// with the step-size search of Bernaards & Jennrich 2005) driving small criterion plug-ins (value and
// gradient), Kaiser's (1958) pairwise varimax as an independent second algorithm, promax
// (Hendrickson & White 1964), Kaiser row normalisation, and seeded random starts with a report of how
// many reached the best criterion value.
//
// Conventions (used everywhere in Lode):
//   - Loadings are items x factors. A rotation matrix T (factors x factors) turns unrotated loadings A
//     into the pattern P = A T (orthogonal, T'T = I) or P = A inv(T)' (oblique, columns of T of unit
//     length), as in Jennrich (2001, 2002). Factor correlations Phi = T'T (identity for orthogonal);
//     structure S = P Phi; the common part A A' = P Phi P' is unchanged.
//   - Presentation (order_and_reflect): factors in decreasing order of the sum of squared pattern
//     loadings (the variance they account for when orthogonal), each reflected so its pattern
//     loadings sum positive; structure, Phi and the columns of T follow consistently.
#pragma once

#include "lode/common.hpp"

#include <cstdint>

#include <string>
#include <string_view>
#include <vector>

namespace lode {

// Rotation methods. Orthogonal and oblique versions of a criterion are separate methods so a name
// says everything (the C ABI and the add-in pass names; see rotation_from_name).
enum class RotationMethod : int {
  none = 0,                 // unrotated (still ordered and reflected)
  varimax = 1,              // orthomax gamma = 1 (Kaiser 1958), by gradient projection
  varimax_kaiser = 2,       // varimax by Kaiser's (1958) pairwise planar rotations
  quartimax = 3,            // orthomax gamma = 0
  equamax = 4,              // orthomax gamma = factors / 2 (Crawford-Ferguson kappa = factors / (2 items))
  crawford_ferguson = 5,    // Crawford & Ferguson (1970) family with kappa, orthogonal
  geomin_orthogonal = 6,    // geomin (Yates 1987; Browne 2001) with epsilon, orthogonal
  target_orthogonal = 7,    // least squares toward a full or partial target (Browne 2001), orthogonal
  oblimin = 8,              // direct oblimin with gamma (Jennrich & Sampson 1966), oblique
  quartimin = 9,            // oblimin with gamma = 0, oblique
  crawford_ferguson_oblique = 10,
  geomin = 11,              // geomin, oblique
  target_oblique = 12,
  promax = 13,              // varimax, then oblique Procrustes toward |L|^power (Hendrickson & White 1964)
};

// True for methods whose factors may correlate.
bool is_oblique(RotationMethod method) noexcept;

// The canonical lower-case name ("varimax", "geomin_orthogonal", ...).
const char* rotation_name(RotationMethod method) noexcept;

// Parses a name: case-insensitive, '-', ' ' and '_' interchangeable; also accepts "cf" for
// crawford_ferguson, "target" for target_orthogonal. Unknown names throw Error(invalid_argument)
// listing the valid names.
RotationMethod rotation_from_name(std::string_view name);

// All canonical names, in enum order.
std::vector<std::string> rotation_names();

struct RotationOptions {
  RotationMethod method = RotationMethod::varimax;
  bool normalize = true;        // Kaiser row normalisation: rotate rows scaled to unit length, scale back
  double gamma = 0.0;           // oblimin parameter (0 = quartimin, 0.5 biquartimin)
  double kappa = 0.0;           // Crawford-Ferguson parameter, 0..1
  double epsilon = 0.01;        // geomin's small constant (Browne 2001 suggests 0.01 for few factors)
  double power = 4.0;           // promax power (R's stats::promax default m = 4)
  Matrix target;                // items x factors target; NaN marks an unspecified entry
  int random_starts = -1;       // extra random starts besides the unrotated one; -1 = by method:
                                // 10 for geomin, oblimin, quartimin and oblique CF, 0 otherwise
  std::uint64_t seed = 1;       // random start i draws from random_stream(seed, i)
  int max_iterations = 20000;   // per start (sweeps for varimax_kaiser)
  double tolerance = 1e-6;      // Frobenius norm of the projected gradient (GPA); largest planar
                                // angle in a sweep, in radians (varimax_kaiser)
  double best_tolerance = 1e-6; // a start "reached the best" when its criterion is within
                                // best_tolerance * max(1, |best|) of the best value
  double distinct_tolerance = 1e-3;  // two solutions differ when, after order_and_reflect, some
                                     // pattern loading differs by more than this
  int threads = 1;              // for random starts (0 = all cores); results do not depend on it
  std::vector<std::string> item_names;  // optional, for error messages (row i is item i)
  // Starts done / rotation_start_count(options), reported from the calling thread (parallel_for);
  // returning false cancels (Error cancelled). Only the methods with starts (gradient projection)
  // report; none, varimax_kaiser and promax run one short start without reports. Never changes a result.
  ProgressFn progress;
  // Gradient projection methods: the rotation matrix T (factors x factors, see the convention above)
  // that start 0 begins at; empty = the identity (the unrotated loadings). Orthogonal methods start
  // from the orthogonal matrix nearest to it (its polar factor), oblique ones from it with columns
  // scaled to unit length. A start near the solution (e.g. a full-sample rotation carried over to a
  // bootstrap resample) saves iterations. Random starts are unaffected.
  Matrix start;
};

// How many starts rotate() runs for these options: 1 + the random starts for the gradient projection
// methods (random_starts, or the method's default when -1), 1 for none, varimax_kaiser and promax.
int rotation_start_count(const RotationOptions& options) noexcept;

// What the random starts found. Start 0 begins at options.start (by default the unrotated loadings,
// T = I); start i >= 1 at a uniformly random orthogonal matrix drawn from random_stream(seed, i).
struct RandomStartReport {
  int starts = 1;
  int converged = 0;              // starts that met the tolerance within max_iterations
  int reached_best = 0;           // converged starts within best_tolerance of the best criterion
  int distinct_solutions = 0;     // distinct converged solutions (distinct_tolerance on loadings)
  int best_start = 0;             // which start gave the reported solution
  std::vector<double> criteria;   // final criterion value of every start
};

struct RotationResult {
  RotationMethod method = RotationMethod::none;
  bool oblique = false;
  bool normalized = false;
  Matrix pattern;              // items x factors
  Matrix structure;            // pattern * factor_correlations
  Matrix factor_correlations;  // identity for orthogonal methods
  Matrix rotation;             // T, see the convention above
  double criterion = 0.0;      // criterion at the solution (on the normalised loadings when
                               // normalized; without normalisation, on the loadings scaled by a
                               // power of two to a largest magnitude in [1, 2) when theirs lies
                               // outside [1e-20, 1e20]); the varimax value for promax; 0 for none
  Convergence convergence;     // of the reported start (of the varimax step for promax)
  Vector ss_pattern;           // per factor: sum of squared pattern loadings
  Vector ss_structure;         // per factor: sum of squared structure loadings (variance the factor
                               // accounts for ignoring the others; equals ss_pattern if orthogonal)
  RandomStartReport starts;
};

// Rotation of loadings `a` toward a full target (both items x factors) in closed form, without
// reordering or reflecting: pattern = a * transformation.
struct ProcrustesFit {
  Matrix pattern;
  Matrix factor_correlations;  // identity for the orthogonal fit
  Matrix transformation;       // factors x factors
};

// Orthogonal: the T with T'T = I minimising ||a T - target|| (Schonemann 1966): T = U V' from the
// singular value decomposition a' target = U S V'.
ProcrustesFit procrustes_orthogonal(const Matrix& a, const Matrix& target);

// Oblique: the least-squares U = (a'a)^-1 a' target, its columns scaled so that the factors have unit
// variance (diag((U'U)^-1) = 1); factor correlations (U'U)^-1 (Hurley & Cattell 1962; the step of
// promax, Hendrickson & White 1964).
ProcrustesFit procrustes_oblique(const Matrix& a, const Matrix& target);

// Rotates unrotated loadings (items x factors, at least 2 factors, all finite) and presents the result
// with order_and_reflect (except target rotations, whose factor order and signs the target fixes).
RotationResult rotate(const Matrix& loadings, const RotationOptions& options = {});

// A criterion's value and gradient with respect to the loadings, for the GPA methods (not none,
// varimax_kaiser, promax, which use the varimax criterion).
struct CriterionValue {
  double value = 0.0;
  Matrix gradient;
};
CriterionValue rotation_criterion(const Matrix& rotated_loadings, const RotationOptions& options);

// The projected gradient of the criterion at T for unrotated loadings A (normalised as options say):
// zero at a stationary point. Orthogonal: G - T sym(T'G); oblique: G - T diag(1'(T o G)), where G is
// the gradient with respect to T (Jennrich 2001, 2002).
Matrix projected_gradient(const Matrix& loadings, const Matrix& rotation, const RotationOptions& options);

// How factors were reordered and reflected: new factor k is signs[k] times old factor order[k].
struct FactorOrder {
  std::vector<Index> order;
  Vector signs;
};

// The presentation order of a solution (see the convention above); ties keep their original order.
FactorOrder presentation_order(const Matrix& pattern);

// Applies a FactorOrder to a matrix whose columns are factors (pattern, structure, rotation matrix).
Matrix apply_to_columns(const Matrix& m, const FactorOrder& order);

// Applies a FactorOrder to a factors x factors correlation matrix (rows and columns).
Matrix apply_to_correlations(const Matrix& phi, const FactorOrder& order);

// Orders and reflects a result in place: pattern, structure, factor_correlations, rotation, ss_*.
FactorOrder order_and_reflect(RotationResult& result);

}  // namespace lode
