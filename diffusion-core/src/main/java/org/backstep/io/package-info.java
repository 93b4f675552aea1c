/**
 * File support shared by the rest of the library: atomic writes that leave an existing file
 * untouched on failure.
 */
package org.backstep.io;
