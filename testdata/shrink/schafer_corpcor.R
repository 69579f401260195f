#!/usr/bin/Rscript
# Reference values for shrink.SchaferStrimmer.
# R 4.2.2 with corpcor 1.6.10 (Debian r-base-core, r-cran-corpcor).
# Run: /usr/bin/Rscript schafer_corpcor.R > schafer_corpcor.json
# Calls: corpcor::cov.shrink(x, verbose = FALSE) and, with observation
# weights, cov.shrink(x, w = w, verbose = FALSE); recorded: the matrix and its
# attributes "lambda" and "lambda.var". Inputs are seeded random returns.
suppressMessages(library(corpcor))
set.seed(20050101)
num <- function(v) paste(sprintf("%.17g", v), collapse = ", ")
mat <- function(m) paste0("[", paste(apply(m, 1, function(r) paste0("[", num(r), "]")), collapse = ",\n"), "]")
gen <- function(t, n) {
  f <- matrix(rnorm(t * 2), t, 2)
  b <- matrix(rnorm(2 * n), 2, n) + c(0.8, 0)
  0.01 * (f %*% b + matrix(rnorm(t * n), t, n) %*% diag(0.5 + runif(n), n))
}
cases <- list(
  list(name = "T>N", t = 40, n = 6, w = FALSE, const = FALSE),
  list(name = "T<N", t = 10, n = 18, w = FALSE, const = FALSE),
  list(name = "weighted", t = 30, n = 5, w = TRUE, const = FALSE),
  list(name = "constant column", t = 25, n = 4, w = FALSE, const = TRUE),
  list(name = "one asset", t = 20, n = 1, w = FALSE, const = FALSE)
)
out <- c()
for (cs in cases) {
  x <- gen(cs$t, cs$n)
  if (cs$const) x[, 2] <- 0.003
  if (cs$w) {
    w <- 0.94^((cs$t - 1):0)
    s <- cov.shrink(x, w = w, verbose = FALSE)
  } else {
    w <- numeric(0)
    s <- suppressWarnings(cov.shrink(x, verbose = FALSE))
  }
  out <- c(out, paste0("{\"name\": \"", cs$name, "\",\n\"x\": ", mat(x), ",\n\"w\": [", num(w),
    "],\n\"cov\": ", mat(matrix(s, cs$n, cs$n)), ",\n\"lambda\": ", num(attr(s, "lambda")),
    ",\n\"lambda_var\": ", num(attr(s, "lambda.var")), "}"))
}
cat("{\"source\": \"R ", as.character(getRversion()), ", corpcor ", as.character(packageVersion("corpcor")),
    "; see schafer_corpcor.R\",\n\"cases\": [", paste(out, collapse = ",\n"), "]}\n", sep = "")
