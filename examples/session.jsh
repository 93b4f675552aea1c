// A sample JShell session: run it with  examples/jshell examples/session.jsh
// The data are invented reefer telemetry for demonstration, not measurements.
var telemetry = ReeferFleet.generate(ReeferFleet.options().withContainers(8).withDays(2));
var table = FleetTables.cells(telemetry);
System.out.println(table);
var train = table.filterRows(i -> i % 5 != 0);
var held = table.filterRows(i -> i % 5 == 0);
var model = Backstep.builder().steps(50).hidden(64, 64).batchSize(64).epochs(200).seed(7).fit(train);
System.out.println(model);
var bound = model.bound(held.completeRows(), BoundOptions.sampled(16), 1);
System.out.println(bound);
var samples = model.sample(5, SamplingPlan.implicit(20, 0.0), 2);
System.out.println(samples);
var imputed = model.impute(held.selectRows(new int[] {0, 1, 2, 3, 4}), Defaults.imputation().withDraws(8), 3);
System.out.println(imputed.mean());
/exit
