# Peer timing for the Oddsmith speed benchmark: R's glm.fit (binary) and nnet::multinom (multi-class)
# on the SAME data files bench/generate.ts wrote (column-major little-endian float64).
#
# Usage: Rscript bench/peers/r_peer.R DATASET TOOL WARMUP RUNS [BUDGET_SECONDS]
#   TOOL = glm.fit   (binomial family, IRLS; binary sets)
#   TOOL = multinom  (nnet::multinom, BFGS; multi-class sets)
# Only the fit call is timed (elapsed time of proc.time), after WARMUP untimed fits; loading and the
# intercept column are outside the timed region. Prints one JSON line (written by hand: no jsonlite).
# Bounded runs, the same policy as python_peer.py: a fit longer than LONG_FIT_SECONDS makes the
# warm-up fit count as a timed run ("coldFirst"), and timed runs stop once their total passes the budget.

args <- commandArgs(trailingOnly = TRUE)
name <- args[1]; tool <- args[2]; warmup <- as.integer(args[3]); runs <- as.integer(args[4])
budget <- if (length(args) >= 5) as.numeric(args[5]) else 1e9
LONG_FIT_SECONDS <- 2

# Runs fit() under the bounded-run policy; returns the last fit, wall and CPU seconds per timed run.
timed_runs <- function(fit) {
  times <- numeric(0); cpu <- numeric(0); cold <- FALSE; done_warmup <- 0
  repeat {
    p0 <- proc.time()
    result <- fit()
    p1 <- proc.time()
    dt <- p1[["elapsed"]] - p0[["elapsed"]]
    dc <- (p1[["user.self"]] + p1[["sys.self"]]) - (p0[["user.self"]] + p0[["sys.self"]])
    if (done_warmup < warmup && !(dt > LONG_FIT_SECONDS && length(times) == 0)) {
      done_warmup <- done_warmup + 1
      next
    }
    if (done_warmup < warmup) { cold <- TRUE; done_warmup <- warmup }
    times <- c(times, dt); cpu <- c(cpu, dc)
    if (length(times) >= runs || sum(times) + dt > budget) break
  }
  list(result = result, times = times, cpu = cpu, cold = cold)
}

script_dir <- dirname(normalizePath(sub("^--file=", "", grep("^--file=", commandArgs(FALSE), value = TRUE))))
data_dir <- file.path(dirname(script_dir), "data")

read_meta_number <- function(txt, key) as.numeric(sub(paste0('.*"', key, '": *([0-9]+).*'), "\\1", txt))
meta_txt <- paste(readLines(file.path(data_dir, paste0(name, ".json")), warn = FALSE), collapse = " ")
n <- read_meta_number(meta_txt, "rows"); d <- read_meta_number(meta_txt, "cols")

read_f64 <- function(file, count) {
  con <- file(file, "rb"); on.exit(close(con))
  readBin(con, "double", n = count, size = 8, endian = "little")
}
X <- matrix(read_f64(file.path(data_dir, paste0(name, ".X.f64")), n * d), nrow = n, ncol = d)
Xi <- cbind(1, X)

# Tight tolerances so that every fit reaches the optimum (glm.fit: relative deviance change;
# multinom: relative objective change of its BFGS optimizer).
GLM_EPSILON <- 1e-10
MULTINOM_RELTOL <- 1e-12
MULTINOM_MAXIT <- 10000

if (tool == "glm.fit") {
  y <- read_f64(file.path(data_dir, paste0(name, ".y.f64")), n)
  tr <- timed_runs(function() glm.fit(Xi, y, family = binomial(), control = glm.control(epsilon = GLM_EPSILON, maxit = 100)))
  fit <- tr$result
  eta <- fit$linear.predictors
  loglik <- sum(y * eta - ifelse(eta > 0, eta + log1p(exp(-eta)), log1p(exp(eta))))
  iterations <- fit$iter
  converged <- fit$converged
  version <- paste(R.version$major, R.version$minor, sep = ".")
} else if (tool == "multinom") {
  suppressPackageStartupMessages(library(nnet))
  con <- file(file.path(data_dir, paste0(name, ".cls.i32")), "rb")
  cls <- readBin(con, "integer", n = n, size = 4, endian = "little"); close(con)
  yf <- factor(cls)
  tr <- timed_runs(function() multinom(yf ~ X, trace = FALSE, maxit = MULTINOM_MAXIT, reltol = MULTINOM_RELTOL, MaxNWts = 100000))
  fit <- tr$result
  loglik <- -fit$value  # multinom minimises the negative log-likelihood (no decay: unpenalized)
  iterations <- NA
  converged <- fit$convergence == 0
  version <- as.character(packageVersion("nnet"))
} else {
  stop(paste("unknown tool", tool))
}

cat(sprintf(
  '{"tool":"%s","solver":"%s","version":"%s","R":"%s","dataset":"%s","times":[%s],"cpu":[%s],"coldFirst":%s,"median":%.9g,"logLik":%.15g,"iterations":%s,"converged":%s}\n',
  ifelse(tool == "glm.fit", "R glm.fit", "R nnet::multinom"), ifelse(tool == "glm.fit", "IRLS", "BFGS"),
  version, paste(R.version$major, R.version$minor, sep = "."), name,
  paste(sprintf("%.6f", tr$times), collapse = ","), paste(sprintf("%.6f", tr$cpu), collapse = ","),
  ifelse(tr$cold, "true", "false"), median(tr$times), loglik,
  ifelse(is.na(iterations), "null", as.character(iterations)), ifelse(converged, "true", "false")))
