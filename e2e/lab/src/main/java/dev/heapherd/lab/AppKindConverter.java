package dev.heapherd.lab;

import picocli.CommandLine.ITypeConverter;
import picocli.CommandLine.TypeConversionException;

/** Reads an app name as written on the command line (lower case). */
final class AppKindConverter implements ITypeConverter<AppKind> {

  @Override
  public AppKind convert(String value) {
    return AppKind.of(value)
        .orElseThrow(
            () ->
                new TypeConversionException(
                    "unknown app \"" + value + "\" (use search, sql, cache, graph or codec)"));
  }
}
