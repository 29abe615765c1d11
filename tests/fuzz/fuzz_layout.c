/* fuzz_layout.c - libFuzzer harness: layout reader. A layout it accepts must describe a page
 * the PDF writer can use: every size finite and positive, every region inside the label, the
 * grid within its limits; anything else is reported as a crash. */
#include <math.h>
#include <stdint.h>

#include "fuzz_common.h"
#include "write/tw_layout.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);

static int positive(double v)
{
    return isfinite(v) && v > 0;
}

static int box_ok(tw_box b, const tw_layout *l)
{
    const double eps = 1e-6;
    return isfinite(b.x) && isfinite(b.y) && positive(b.w) && positive(b.h) && b.x >= -eps &&
           b.y >= -eps && b.x + b.w <= l->label_w + eps && b.y + b.h <= l->label_h + eps;
}

static int layout_ok(const tw_layout *l)
{
    return l->name && positive(l->label_w) && positive(l->label_h) && positive(l->page_w) &&
           positive(l->page_h) && l->columns >= 1 && l->rows >= 1 && l->columns <= 50 &&
           l->rows <= 50 && isfinite(l->gutter_x) && isfinite(l->gutter_y) &&
           box_ok(l->header, l) && box_ok(l->body, l) && box_ok(l->qr, l) &&
           box_ok(l->footer, l) && positive(l->header_pt) && positive(l->body_pt) &&
           positive(l->footer_pt) && positive(l->min_pt) && positive(l->printer_dpi);
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    tw_diags d;
    tw_diags_init(&d);
    tw_layout l;
    if (tw_layout_load_mem("fuzz-layout.json", (const char *)data, size, &l, &d) == 0 &&
        !layout_ok(&l))
        abort(); /* accepted a layout the writer cannot draw */
    fuzz_print(&d);
    tw_layout_free(&l);
    tw_diags_free(&d);
    return 0;
}
