/**
 * Tables of numbers with continuous and binary columns (missing cells as NaN); CSV reading (streamed,
 * strict UTF-8, every problem with its line and column) and atomic writing, both started from
 * {@code CsvTables}; and the per-column invertible transforms into a model's standardized space.
 */
package org.backstep.table;
