# Checking, simulating and fitting belief files; reading fit folders back.

num_or_inf <- function(x) {
  # fit.json writes +-inf and NaN as strings.
  if (is.null(x)) return(NA_real_)
  if (is.character(x)) return(as.numeric(sub("^inf$", "Inf", sub("^-inf$", "-Inf", x))))
  as.numeric(x)
}

priorsmith_check <- function(spec) {
  r <- priorsmith_run(c("check", spec), quiet = FALSE)
  r$stdout
}

priorsmith_simulate <- function(spec, set = NULL) {
  args <- c("simulate", spec, "--json")
  for (k in names(set)) args <- c(args, "--set", sprintf("%s=%.17g", k, set[[k]]))
  r <- priorsmith_run(args, quiet = FALSE)
  v <- jsonlite::fromJSON(paste(r$stdout, collapse = "\n"), simplifyVector = TRUE)
  v$hyperparameters <- unlist(v$hyperparameters)
  v
}

priorsmith_fit <- function(spec, out = tempfile("priorsmith-fit-"), seed = NULL,
                           draws = NULL) {
  args <- c("fit", spec, "--out", out)
  if (!is.null(seed)) args <- c(args, "--seed", format(seed, scientific = FALSE))
  if (!is.null(draws)) args <- c(args, "--draws", format(draws, scientific = FALSE))
  priorsmith_run(args, quiet = TRUE)
  priorsmith_read_fit(out)
}

priorsmith_read_fit <- function(dir) {
  path <- file.path(dir, "fit.json")
  if (!file.exists(path)) stop(sprintf("%s: no fit.json (is it a priorsmith fit folder?)", dir))
  rec <- jsonlite::fromJSON(path, simplifyVector = FALSE)
  structure(list(dir = normalizePath(dir), record = rec), class = "priorsmith_fit")
}

priorsmith_hyperparameters <- function(fit) {
  h <- fit$record$hyperparameters
  order <- unlist(fit$record$order)
  vapply(order, function(k) num_or_inf(h[[k]]), numeric(1))
}

priorsmith_beliefs <- function(fit) {
  rows <- lapply(fit$record$beliefs, function(b) {
    row <- data.frame(
      label = b$label, quantity = b$quantity, verdict = b$verdict,
      fresh = num_or_inf(b$fresh), in_sample = num_or_inf(b$in_sample),
      floor = num_or_inf(b$noise_floor), ratio = num_or_inf(b$ratio),
      rms_cdf_gap = num_or_inf(b$rms_cdf_gap),
      ess = if (is.null(b$ess)) NA_real_ else num_or_inf(b$ess),
      believed_ess = if (is.null(b$believed_ess)) NA_real_ else num_or_inf(b$believed_ess),
      stringsAsFactors = FALSE
    )
    probs <- vapply(b$probs, num_or_inf, numeric(1))
    tag <- sprintf("q%02d", round(probs * 100))
    for (i in seq_along(probs)) {
      row[[paste0("believed_", tag[i])]] <- num_or_inf(b$believed_quantiles[[i]])
      row[[paste0("implied_", tag[i])]] <- num_or_inf(b$implied_quantiles[[i]])
    }
    row
  })
  out <- do.call(rbind, rows)
  rownames(out) <- NULL
  out
}

priorsmith_prior <- function(fit) {
  rows <- lapply(fit$record$prior, function(p) {
    params <- p$params
    data.frame(
      parameter = p$parameter,
      family = if (is.null(p$family)) "" else p$family,
      params = paste(vapply(params, function(kv) sprintf("%s = %.6g", kv[[1]], num_or_inf(kv[[2]])),
                            character(1)), collapse = ", "),
      stringsAsFactors = FALSE
    )
  })
  do.call(rbind, rows)
}

priorsmith_export <- function(fit, to = c("brms", "stan", "pymc", "json")) {
  to <- match.arg(to)
  dir <- if (inherits(fit, "priorsmith_fit")) fit$dir else fit
  r <- priorsmith_run(c("export", dir, "--to", to), quiet = TRUE)
  paste(r$stdout, collapse = "\n")
}

priorsmith_brms_priors <- function(fit) {
  code <- strsplit(priorsmith_export(fit, "brms"), "\n", fixed = TRUE)[[1]]
  calls <- trimws(grep("^\\s*set_prior\\(", code, value = TRUE))
  sub(",$", "", calls)
}

print.priorsmith_fit <- function(x, ...) {
  rec <- x$record
  cat(sprintf("priorsmith fit of '%s' (template %s): %s\n", rec$title, rec$template,
              gsub("_", " ", rec$verdict)))
  h <- priorsmith_hyperparameters(x)
  print(h)
  cat(sprintf("folder: %s\n", x$dir))
  cat("A fitted prior is a proposal: review it with the responsible statistician.\n")
  invisible(x)
}
