/* tw_test.h - what every cmocka test program includes. */
#ifndef TW_TEST_H
#define TW_TEST_H

#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#define assert_near(a, b, tol) assert_true(fabs((double)(a) - (double)(b)) <= (tol))

#endif
