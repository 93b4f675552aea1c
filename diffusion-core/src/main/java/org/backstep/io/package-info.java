/**
 * File support shared by the rest of the library: atomic writes that leave an existing file
 * untouched on failure, the model file's exception, and typed reads of untrusted JSON.
 */
package org.backstep.io;
