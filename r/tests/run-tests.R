# Tests of the R functions against the real priorsmith program (base R only).
# They need the program: PRIORSMITH_BIN, options(priorsmith.binary) or the PATH
# (scripts/check-r-package.sh sets PRIORSMITH_BIN).
library(priorsmith)

found <- tryCatch(priorsmith_binary(), priorsmith_not_found = function(e) "")
if (!nzchar(found)) stop("the priorsmith program is needed for these tests: set PRIORSMITH_BIN")

spec <- normalizePath("beliefs.toml")

# check: the program's summary line names the template.
chk <- priorsmith_check(spec)
stopifnot(grepl("valid", chk[1]), grepl("mixture-cure", chk[1]))

# fit: hyperparameters as a named vector in the template's order, equal to fit.json.
fit <- priorsmith_fit(spec, draws = 2000)
h <- priorsmith_hyperparameters(fit)
rec <- jsonlite::fromJSON(file.path(fit$dir, "fit.json"))
stopifnot(identical(names(h), rec$order))
stopifnot(identical(unname(h), unname(unlist(rec$hyperparameters[rec$order]))))
stopifnot(h[["shape.sdlog"]] == 0.25)  # fixed in the file

# belief table: one row per belief; the verdicts are the record's; the median
# survival's believed 95 % quantile is +Inf (5 % mass at inf in the file).
b <- priorsmith_beliefs(fit)
stopifnot(is.data.frame(b), nrow(b) == 3)
stopifnot(identical(b$label, c("cure_fraction", "survival_prob at 36 months", "median_survival")))
stopifnot(identical(b$verdict, rec$beliefs$verdict))
stopifnot(is.infinite(b$believed_q95[3]), all(is.finite(b$implied_q50)))
stopifnot(all(b$implied_q05 <= b$implied_q50), all(b$implied_q50 <= b$implied_q95))

# prior table
p <- priorsmith_prior(fit)
stopifnot(identical(p$parameter, c("cure_logit", "log_scale", "shape")))
stopifnot(identical(p$family, c("normal", "normal", "lognormal")))

# brms: ready set_prior() calls that parse, with the fitted numbers (6 digits).
pr <- priorsmith_brms_priors(fit)
stopifnot(length(pr) == 3, all(startsWith(pr, "set_prior(\"")))
got <- list()
set_prior <- function(prior, ...) { got[[length(got) + 1]] <<- list(prior = prior, ...); invisible(NULL) }
for (s in pr) eval(parse(text = s))
mu <- as.numeric(sub("^normal\\(([^,]+),.*$", "\\1", got[[1]]$prior))
stopifnot(abs(mu - h[["cure_logit.mean"]]) <= 1e-5 * abs(h[["cure_logit.mean"]]))
stopifnot(identical(got[[1]]$nlpar, "cureLogit"), identical(got[[1]]$class, "b"))

# simulate at set values: the values come back, and the quantities table has a row per belief.
sim <- priorsmith_simulate(spec, set = list("cure_logit.mean" = -1.2, "log_scale.sd" = 0.3))
stopifnot(sim$hyperparameters[["cure_logit.mean"]] == -1.2, sim$hyperparameters[["log_scale.sd"]] == 0.3)
stopifnot(is.data.frame(sim$quantities), nrow(sim$quantities) == 3)

# errors: the tool's text and exit code as an R condition.
bad <- tempfile(fileext = ".toml")
writeLines(sub("\"0.5\" = 0.25", "\"0.5\" = 1.7", readLines(spec)), bad)
e <- tryCatch(priorsmith_fit(bad), priorsmith_error = function(e) e)
stopifnot(inherits(e, "priorsmith_error"), e$exit_code == 3L)
stopifnot(grepl(basename(bad), conditionMessage(e), fixed = TRUE), grepl("belief[1]", conditionMessage(e), fixed = TRUE))
e2 <- tryCatch(priorsmith_check(file.path(tempdir(), "none.toml")), priorsmith_error = function(e) e)
stopifnot(e2$exit_code == 4L)
old <- options(priorsmith.binary = file.path(tempdir(), "no-such-program"))
e3 <- tryCatch(priorsmith_check(spec), error = function(e) e)
options(old)
stopifnot(inherits(e3, "error"))

cat("priorsmith R tests: all passed\n")
