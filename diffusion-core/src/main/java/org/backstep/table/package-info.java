/**
 * Tables of numbers with continuous and binary columns (missing cells as NaN), their CSV reading and
 * atomic writing, and the per-column invertible transforms into a model's standardized space.
 */
package org.backstep.table;
