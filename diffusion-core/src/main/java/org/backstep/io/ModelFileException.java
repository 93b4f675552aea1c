package org.backstep.io;

import java.io.IOException;

/**
 * A model file that cannot be loaded: foreign, truncated, of an unknown format version, missing an
 * entry, failing a checksum, with shapes that disagree with its manifest, or with sizes past sane
 * limits. {@link #part()} names the part that is wrong.
 */
public final class ModelFileException extends IOException {

    private static final long serialVersionUID = 1L;

    private final String part;

    /**
     * @param part the entry or manifest field that is wrong
     * @param message what is wrong with it
     */
    public ModelFileException(String part, String message) {
        super(part + ": " + message);
        this.part = part;
    }

    /**
     * @param part the entry or manifest field that is wrong
     * @param message what is wrong with it
     * @param cause the underlying error
     */
    public ModelFileException(String part, String message, Throwable cause) {
        super(part + ": " + message, cause);
        this.part = part;
    }

    /** @return the entry or manifest field that is wrong */
    public String part() {
        return part;
    }
}
