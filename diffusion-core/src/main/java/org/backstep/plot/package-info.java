/**
 * Charts of schedules, bounds, training histories, samples and step plans, drawn headless with
 * XChart and written atomically as PNG or SVG.
 */
package org.backstep.plot;
