/*
 * tw_batch.h - the derive step for a list of buses, shared by the commands that print labels:
 * derive every label, count the ones that must be refused, pick the run's layout, and print
 * the findings that concern the buses in hand.
 *
 * Labels are filled from scratch and owned by the caller (tw_batch_free() frees n of them and
 * the array, and accepts NULL).
 */
#ifndef TW_BATCH_H
#define TW_BATCH_H

#include <stddef.h>
#include <stdio.h>

#include "base/tw_diag.h"
#include "rules/tw_label.h"
#include "write/tw_layout.h"
#include "rules/tw_scenario.h"
#include "read/tw_site.h"

/* Derive labels[i] for buses[i]. A bus whose derivation or validation found an error is
 * refused, or made a watermarked draft (label->draft, rehashed) when draft is set.
 * Returns how many were refused. */
size_t tw_batch_derive(const tw_bus *const *buses, size_t n, const tw_site *site,
                       const char *print_date, int draft, tw_label *labels, tw_diags *d);

/* The run's layout: the one named (option), else the site's, else the built-in default.
 * 0, or -1 with findings. */
int tw_batch_layout(const char *name, const tw_site *site, tw_layout *l, tw_diags *d);

/* Print the findings about the n buses given, and those about no bus in particular. */
void tw_batch_print_findings(const tw_diags *d, const tw_bus *const *buses, size_t n,
                             FILE *out);

/* Free n labels and the array. */
void tw_batch_free(tw_label *labels, size_t n);

#endif
