/**
 * Invented telemetry of a fleet of refrigerated shipping containers ("reefers") with injected
 * faults and missing cells: the demonstration data of Backstep, not measurements.
 */
package org.backstep.examples.fleet;
