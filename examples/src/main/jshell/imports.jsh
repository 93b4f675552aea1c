import org.backstep.*;
import org.backstep.schedule.*;
import org.backstep.table.*;
import org.backstep.quality.*;
import org.backstep.plot.*;
import org.backstep.examples.fleet.*;
import java.nio.file.*;
