package org.backstep.io;

import com.fasterxml.jackson.databind.JsonNode;
import org.backstep.schedule.Require;

/**
 * Typed reads of the JSON in a model file, which is untrusted input: each read checks the JSON
 * type and refuses a mismatch, never coercing (a string where a number belongs, an array, a
 * fraction where a whole number belongs, a whole number past 32 bits, a number past the double
 * range are all refused, where Jackson's {@code asInt()} would read 0, 20 or Infinity). Every
 * refusal is a {@link ModelFileException} whose part names the entry and the field, for example
 * {@code "model.json options.hidden[1]"} (see {@link #child}).
 */
public final class JsonFields {

    private JsonFields() {
    }

    /**
     * @param parent an object
     * @param key the field's name
     * @param where the parent's name in messages, e.g. {@code "model.json options"}
     * @return the field's value, present and not JSON null
     * @throws ModelFileException if {@code parent} is not an object or the field is missing or null
     */
    public static JsonNode field(JsonNode parent, String key, String where) throws ModelFileException {
        Require.notNull("key", key);
        Require.notNull("where", where);
        if (parent == null || !parent.isObject()) {
            throw new ModelFileException(where, "expected a JSON object, found " + describe(parent));
        }
        JsonNode v = parent.get(key);
        if (v == null || v.isNull()) {
            throw new ModelFileException(child(where, key), "field missing");
        }
        return v;
    }

    /**
     * @param value a value
     * @param where its name in messages
     * @return {@code value}, a JSON object
     * @throws ModelFileException otherwise
     */
    public static JsonNode object(JsonNode value, String where) throws ModelFileException {
        Require.notNull("where", where);
        if (value == null || !value.isObject()) {
            throw new ModelFileException(where, "expected a JSON object, found " + describe(value));
        }
        return value;
    }

    /**
     * @param value a value
     * @param where its name in messages
     * @param minSize the fewest elements
     * @param maxSize the most elements
     * @return {@code value}, a JSON array of minSize..maxSize elements
     * @throws ModelFileException otherwise
     */
    public static JsonNode array(JsonNode value, String where, int minSize, int maxSize) throws ModelFileException {
        Require.notNull("where", where);
        if (value == null || !value.isArray()) {
            throw new ModelFileException(where, "expected a JSON array, found " + describe(value));
        }
        if (value.size() < minSize || value.size() > maxSize) {
            throw new ModelFileException(where, "has " + value.size() + " elements; expected " + minSize + " to " + maxSize);
        }
        return value;
    }

    /**
     * @param value a value
     * @param where its name in messages
     * @return the text of a JSON string
     * @throws ModelFileException if not a JSON string
     */
    public static String text(JsonNode value, String where) throws ModelFileException {
        Require.notNull("where", where);
        if (value == null || !value.isTextual()) {
            throw new ModelFileException(where, "expected a JSON string, found " + describe(value));
        }
        return value.textValue();
    }

    /**
     * @param value a value
     * @param where its name in messages
     * @param type the enum
     * @param <E> the enum type
     * @return the constant the JSON string names
     * @throws ModelFileException if not a string naming one of the constants
     */
    public static <E extends Enum<E>> E constant(JsonNode value, String where, Class<E> type) throws ModelFileException {
        Require.notNull("where", where);
        Require.notNull("type", type);
        String name = text(value, where);
        for (E e : type.getEnumConstants()) {
            if (e.name().equals(name)) {
                return e;
            }
        }
        throw new ModelFileException(where, "\"" + shorten(name) + "\" is not one of "
                + java.util.Arrays.toString(type.getEnumConstants()));
    }

    /**
     * @param value a value
     * @param where its name in messages
     * @param lo the smallest allowed value
     * @param hi the largest allowed value
     * @return a JSON whole number in lo..hi (a fraction such as 2.5, or 2.0 written with a point, is refused)
     * @throws ModelFileException otherwise
     */
    public static long whole(JsonNode value, String where, long lo, long hi) throws ModelFileException {
        Require.notNull("where", where);
        if (value == null || !value.isIntegralNumber()) {
            throw new ModelFileException(where, "expected a JSON whole number, found " + describe(value));
        }
        if (!value.canConvertToLong() || value.longValue() < lo || value.longValue() > hi) {
            throw new ModelFileException(where, shorten(value.asText()) + " is outside " + lo + " to " + hi);
        }
        return value.longValue();
    }

    /**
     * @param value a value
     * @param where its name in messages
     * @param lo the smallest allowed value
     * @param hi the largest allowed value
     * @return a JSON whole number in lo..hi, which are ints
     * @throws ModelFileException otherwise
     */
    public static int int32(JsonNode value, String where, int lo, int hi) throws ModelFileException {
        return (int) whole(value, where, lo, hi);
    }

    /**
     * @param value a value
     * @param where its name in messages
     * @return a finite JSON number (whole numbers are read as doubles)
     * @throws ModelFileException if not a number, or not finite in double (1e400 is refused)
     */
    public static double finite(JsonNode value, String where) throws ModelFileException {
        Require.notNull("where", where);
        if (value == null || !value.isNumber()) {
            throw new ModelFileException(where, "expected a JSON number, found " + describe(value));
        }
        double v = value.doubleValue();
        if (!Double.isFinite(v)) {
            throw new ModelFileException(where, shorten(value.asText()) + " is not a finite double");
        }
        return v;
    }

    /**
     * @param value a value
     * @param where its name in messages
     * @param lo the smallest allowed value
     * @param hi the largest allowed value
     * @return a finite JSON number in [lo, hi]
     * @throws ModelFileException otherwise
     */
    public static double number(JsonNode value, String where, double lo, double hi) throws ModelFileException {
        double v = finite(value, where);
        if (!(v >= lo && v <= hi)) {
            throw new ModelFileException(where, v + " is outside [" + lo + ", " + hi + "]");
        }
        return v;
    }

    /**
     * @param value a value
     * @param where its name in messages
     * @return a JSON boolean
     * @throws ModelFileException otherwise
     */
    public static boolean bool(JsonNode value, String where) throws ModelFileException {
        Require.notNull("where", where);
        if (value == null || !value.isBoolean()) {
            throw new ModelFileException(where, "expected true or false, found " + describe(value));
        }
        return value.booleanValue();
    }

    /**
     * The name of a field in messages: {@code "model.json options"} and {@code "hidden"} give
     * {@code "model.json options.hidden"}; an entry's name and a top-level field are parted by a
     * space, {@code "model.json format"}.
     *
     * @param where the parent's name
     * @param key the field's name
     * @return the field's name
     */
    public static String child(String where, String key) {
        Require.notNull("where", where);
        Require.notNull("key", key);
        return where + (where.indexOf(' ') < 0 ? " " : ".") + key;
    }

    /** The JSON type of a value and a short view of it, for messages. */
    static String describe(JsonNode v) {
        if (v == null || v.isMissingNode()) {
            return "nothing";
        }
        String type = v.isTextual() ? "a string" : v.isArray() ? "an array" : v.isObject() ? "an object"
                : v.isBoolean() ? "a boolean" : v.isNull() ? "null" : v.isIntegralNumber() ? "a whole number"
                : v.isNumber() ? "a number" : v.getNodeType().toString().toLowerCase(java.util.Locale.ROOT);
        return type + (v.isContainerNode() ? "" : " " + shorten(v.toString()));
    }

    /**
     * @param s any text
     * @return at most 60 characters of it, control characters written as a backslash, u and four
     *     hex digits, so that a hostile file can neither fill a message nor hide in it
     */
    public static String shorten(String s) {
        Require.notNull("s", s);
        String cut = s.length() <= 60 ? s : s.substring(0, 57) + "...";
        StringBuilder sb = new StringBuilder(cut.length());
        for (char ch : cut.toCharArray()) {
            if (Character.isISOControl(ch)) {
                sb.append(String.format(java.util.Locale.ROOT, "\\u%04x", (int) ch));
            } else {
                sb.append(ch);
            }
        }
        return sb.toString();
    }
}
