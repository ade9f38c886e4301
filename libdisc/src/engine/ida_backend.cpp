// SUNDIALS IDA back end: the same devices as the engine's own integrators, posed as the implicit
// DAE F(t, y, y') = i(y, t) + C(y) y' = 0 (C = dq/dy), solved by variable-order BDF with the
// KLU sparse direct solver and an analytic Jacobian dF/dy + cj dF/dy' ~= G + cj C.
#include <ida/ida.h>
#include <nvector/nvector_serial.h>
#include <sundials/sundials_context.h>
#include <sunlinsol/sunlinsol_klu.h>
#include <sunmatrix/sunmatrix_sparse.h>

#include <fmt/format.h>
#include <algorithm>
#include <cmath>
#include <exception>
#include <string>

#include "disc/error.hpp"
#include "transient_common.hpp"

namespace disc::detail {
namespace {

struct IdaData {
  System* sys = nullptr;
  std::vector<double> x, xdot;
  double sourceScale = 1.0;
  std::exception_ptr error;
  std::string lastMessage;
  long evaluations = 0;
};

void evaluateAt(IdaData& d, double t, N_Vector y, N_Vector yp) {
  const int n = d.sys->size();
  std::copy_n(N_VGetArrayPointer(y), n, d.x.begin());
  std::copy_n(N_VGetArrayPointer(yp), n, d.xdot.begin());
  EvalContext ctx;
  ctx.x = d.x.data();
  ctx.xdot = d.xdot.data();
  ctx.time = t;
  d.sys->evaluate(ctx, true);
  ++d.evaluations;
}

int residualFn(double t, N_Vector y, N_Vector yp, N_Vector rr, void* user) {
  auto& d = *static_cast<IdaData*>(user);
  try {
    evaluateAt(d, t, y, yp);
    const System& sys = *d.sys;
    const int n = sys.size();
    double* r = N_VGetArrayPointer(rr);
    std::copy_n(sys.i.begin(), n, r);
    const auto& J = sys.jacobian();
    const double* ypv = d.xdot.data();
    for (int col = 0; col < n; ++col)
      for (int p = J.outerIndexPtr()[col]; p < J.outerIndexPtr()[col + 1]; ++p)
        r[J.innerIndexPtr()[p]] += sys.C[static_cast<std::size_t>(p)] * ypv[col];
    for (int k = 0; k < n; ++k)
      if (!std::isfinite(r[k])) return 1;  // recoverable: IDA retries with a smaller step
    return 0;
  } catch (...) {
    d.error = std::current_exception();
    return -1;
  }
}

int jacobianFn(double t, double cj, N_Vector y, N_Vector yp, N_Vector, SUNMatrix A, void* user,
               N_Vector, N_Vector, N_Vector) {
  auto& d = *static_cast<IdaData*>(user);
  try {
    evaluateAt(d, t, y, yp);
    System& sys = *d.sys;
    sys.assemble(cj, 0.0);
    const auto& J = sys.jacobian();
    const int nz = static_cast<int>(J.nonZeros());
    sunindextype* colptr = SUNSparseMatrix_IndexPointers(A);
    sunindextype* rowval = SUNSparseMatrix_IndexValues(A);
    double* val = SUNSparseMatrix_Data(A);
    for (int k = 0; k <= sys.size(); ++k) colptr[k] = J.outerIndexPtr()[k];
    for (int k = 0; k < nz; ++k) {
      rowval[k] = J.innerIndexPtr()[k];
      val[k] = J.valuePtr()[k];
    }
    return 0;
  } catch (...) {
    d.error = std::current_exception();
    return -1;
  }
}

void errorHandler(int, const char*, const char*, char* msg, void* user) {
  static_cast<IdaData*>(user)->lastMessage = msg ? msg : "";
}

/// Owns the SUNDIALS objects of one run.
struct IdaRun {
  SUNContext ctx = nullptr;
  N_Vector y = nullptr, yp = nullptr, id = nullptr, atol = nullptr, ele = nullptr, w = nullptr;
  SUNMatrix A = nullptr;
  SUNLinearSolver LS = nullptr;
  void* mem = nullptr;
  ~IdaRun() {
    if (mem) IDAFree(&mem);
    if (LS) SUNLinSolFree(LS);
    if (A) SUNMatDestroy(A);
    for (N_Vector v : {y, yp, id, atol, ele, w})
      if (v) N_VDestroy(v);
    if (ctx) SUNContext_Free(&ctx);
  }
};

void check(int flag, const char* what, const IdaData& d) {
  if (flag < 0) {
    if (d.error) std::rethrow_exception(d.error);
    throw Error(fmt::format("IDA set-up failed in {} (flag {}): {}", what, flag, d.lastMessage));
  }
}

}  // namespace

void integrateIda(System& sys, const TransientOptions& o, std::vector<double>& x, Recorder& rec,
                  RunStats& stats, FailureMonitor& monitor) {
  const int n = sys.size();
  const std::size_t N = static_cast<std::size_t>(n) + 1;
  IdaData data;
  data.sys = &sys;
  data.x.assign(N, 0.0);
  data.xdot.assign(N, 0.0);

  IdaRun run;
  if (SUNContext_Create(nullptr, &run.ctx) != 0) throw Error("could not create a SUNDIALS context");
  run.y = N_VNew_Serial(n, run.ctx);
  run.yp = N_VNew_Serial(n, run.ctx);
  run.id = N_VNew_Serial(n, run.ctx);
  run.atol = N_VNew_Serial(n, run.ctx);
  run.ele = N_VNew_Serial(n, run.ctx);
  run.w = N_VNew_Serial(n, run.ctx);
  std::copy_n(x.begin(), n, N_VGetArrayPointer(run.y));
  N_VConst(0.0, run.yp);

  // Differential unknowns: those whose column of C = dq/dx is not zero at the start.
  {
    EvalContext ctx;
    ctx.x = x.data();
    ctx.xdot = data.xdot.data();
    sys.evaluate(ctx, true);
    const auto& J = sys.jacobian();
    double* idv = N_VGetArrayPointer(run.id);
    for (int col = 0; col < n; ++col) {
      idv[col] = 0.0;
      for (int p = J.outerIndexPtr()[col]; p < J.outerIndexPtr()[col + 1]; ++p)
        if (sys.C[static_cast<std::size_t>(p)] != 0.0) idv[col] = 1.0;
    }
  }
  const auto abstol = sys.absTolerances(o.tol);
  std::copy_n(abstol.begin(), n, N_VGetArrayPointer(run.atol));

  run.mem = IDACreate(run.ctx);
  if (!run.mem) throw Error("could not create the IDA integrator");
  check(IDASetErrHandlerFn(run.mem, errorHandler, &data), "IDASetErrHandlerFn", data);
  check(IDAInit(run.mem, residualFn, 0.0, run.y, run.yp), "IDAInit", data);
  check(IDASVtolerances(run.mem, o.tol.reltol, run.atol), "IDASVtolerances", data);
  check(IDASetUserData(run.mem, &data), "IDASetUserData", data);
  run.A = SUNSparseMatrix(n, n, sys.nnz(), CSC_MAT, run.ctx);
  run.LS = SUNLinSol_KLU(run.y, run.A, run.ctx);
  if (!run.A || !run.LS) throw Error("could not create the KLU linear solver for IDA");
  check(IDASetLinearSolver(run.mem, run.LS, run.A), "IDASetLinearSolver", data);
  check(IDASetJacFn(run.mem, jacobianFn), "IDASetJacFn", data);
  check(IDASetId(run.mem, run.id), "IDASetId", data);
  // Algebraic unknowns (node voltages without charge) follow the differential ones exactly; their
  // local error estimates only reflect switching of the diodes and would stall the step size.
  check(IDASetSuppressAlg(run.mem, SUNTRUE), "IDASetSuppressAlg", data);
  // Exponential junctions need more corrector iterations than IDA's default of four.
  check(IDASetMaxNonlinIters(run.mem, 20), "IDASetMaxNonlinIters", data);
  check(IDASetMaxConvFails(run.mem, 50), "IDASetMaxConvFails", data);
  // A cold switch-on with tight absolute tolerances needs more than IDA's default ten error-test
  // failures on its first step: a node behind a nanosecond RC accelerates fastest at t = 0.
  check(IDASetMaxErrTestFails(run.mem, 30), "IDASetMaxErrTestFails", data);
  check(IDASetMaxOrd(run.mem, o.idaMaxOrder), "IDASetMaxOrd", data);
  const double hmax = resolveMaxStep(sys, o);
  check(IDASetMaxStep(run.mem, hmax), "IDASetMaxStep", data);
  check(IDASetMaxNumSteps(run.mem, 100000), "IDASetMaxNumSteps", data);
  if (o.initialStep > 0.0) check(IDASetInitStep(run.mem, o.initialStep), "IDASetInitStep", data);

  std::vector<double> breaks = sys.breakpoints(0.0, o.stop);
  if (breaks.empty() || breaks.back() < o.stop) breaks.push_back(o.stop);

  auto failure = [&](int flag, double t) {
    if (data.error) std::rethrow_exception(data.error);
    int worst = -1;
    if (IDAGetEstLocalErrors(run.mem, run.ele) == IDA_SUCCESS &&
        IDAGetErrWeights(run.mem, run.w) == IDA_SUCCESS) {
      double big = -1.0;
      const double* e = N_VGetArrayPointer(run.ele);
      const double* wt = N_VGetArrayPointer(run.w);
      for (int k = 0; k < n; ++k)
        if (std::abs(e[k] * wt[k]) > big) {
          big = std::abs(e[k] * wt[k]);
          worst = k;
        }
    }
    throw TimeStepError(fmt::format("IDA stopped at t = {:.9g} s (flag {}): {}; the worst unknown "
                                    "is {}",
                                    t, flag, data.lastMessage, sys.describe(worst)),
                        t, worst >= 0 ? sys.unknownName(worst) : "");
  };

  // Records the point at t; true when the failure check stops the run there.
  auto recordNow = [&](double t, bool accepted) {
    std::copy_n(N_VGetArrayPointer(run.y), n, data.x.begin());
    std::copy_n(N_VGetArrayPointer(run.yp), n, data.xdot.begin());
    EvalContext ctx;
    ctx.x = data.x.data();
    ctx.xdot = data.xdot.data();
    ctx.time = t;
    const bool stop = accepted && monitor.accepted(ctx);
    if (t >= o.recordFrom || stop) rec.record(ctx);
    return stop;
  };

  StepBudget budget(sys, o);
  double t = 0.0;
  bool first = true, stopped = false;
  for (double tb : breaks) {
    if (stopped) break;
    if (tb <= t) continue;
    // Consistent start of each segment: algebraic unknowns and derivatives from the rest.
    if (!first) check(IDAReInit(run.mem, t, run.y, run.yp), "IDAReInit", data);
    const int icFlag = IDACalcIC(run.mem, IDA_YA_YDP_INIT, std::min(tb, t + hmax));
    if (icFlag < 0) failure(icFlag, t);
    check(IDAGetConsistentIC(run.mem, run.y, run.yp), "IDAGetConsistentIC", data);
    if (first && o.recordFrom <= 0.0) recordNow(t, false);
    first = false;
    check(IDASetStopTime(run.mem, tb), "IDASetStopTime", data);
    while (t < tb) {
      double tret = t;
      const int flag = IDASolve(run.mem, tb, &tret, run.y, run.yp, IDA_ONE_STEP);
      if (flag < 0) failure(flag, t);
      const double hLast = tret - t;
      t = tret;
      stopped = recordNow(t, true);
      reportProgress(o, t);
      budget.accepted(t, hLast, data.x.data(), rec);
      if (stopped || flag == IDA_TSTOP_RETURN) break;
    }
    if (!stopped) t = tb;
  }
  std::copy_n(N_VGetArrayPointer(run.y), n, x.begin());

  long v = 0;
  IDAGetNumSteps(run.mem, &v);
  stats.acceptedSteps += v;
  long errFails = 0, convFails = 0;
  IDAGetNumErrTestFails(run.mem, &errFails);
  IDAGetNumNonlinSolvConvFails(run.mem, &convFails);
  stats.rejectedSteps += errFails + convFails;
  IDAGetNumNonlinSolvIters(run.mem, &v);
  stats.newtonIterations += v;
  IDAGetNumLinSolvSetups(run.mem, &v);
  stats.factorizations += v;
  stats.evaluations += data.evaluations;
}

}  // namespace disc::detail
