using System.Reflection;
using System.Text;
using StreamForecast.Forecasting;

namespace StreamForecast.Tests.PublicApi;

/// <summary>
/// Public API changes are deliberate: the library's public surface is listed in <c>StreamForecast.approved.txt</c>.
/// A change to the surface fails this test and writes <c>StreamForecast.received.txt</c> beside it; review the
/// difference and copy the received file over the approved one when the change is intended.
/// </summary>
public sealed class PublicApiTests
{
    [Fact]
    public void PublicSurface_CurrentBuild_MatchesApprovedList()
    {
        string folder = Path.Combine(RepositoryRoot(), "tests", "StreamForecast.Tests", "PublicApi");
        string approvedPath = Path.Combine(folder, "StreamForecast.approved.txt");
        string receivedPath = Path.Combine(folder, "StreamForecast.received.txt");
        string received = Describe(typeof(Forecaster).Assembly);
        string approved = File.Exists(approvedPath) ? File.ReadAllText(approvedPath).ReplaceLineEndings("\n") : "";
        if (received != approved)
        {
            File.WriteAllText(receivedPath, received);
            var added = received.Split('\n').Except(approved.Split('\n')).Take(20);
            var removed = approved.Split('\n').Except(received.Split('\n')).Take(20);
            Assert.Fail($"The public API changed. Review {receivedPath} against the approved list and copy it over if intended.\n" +
                $"Added:\n  {string.Join("\n  ", added)}\nRemoved:\n  {string.Join("\n  ", removed)}");
        }

        File.Delete(receivedPath);
    }

    private static string Describe(Assembly assembly)
    {
        var lines = new List<string>();
        const BindingFlags flags = BindingFlags.Public | BindingFlags.NonPublic | BindingFlags.Instance | BindingFlags.Static | BindingFlags.DeclaredOnly;
        foreach (Type type in assembly.GetExportedTypes())
        {
            lines.Add($"{Kind(type)} {type.FullName}{BaseList(type)}");
            foreach (MemberInfo member in type.GetMembers(flags))
            {
                if (Visible(member) && !IsCompilerNoise(member))
                {
                    lines.Add($"  {type.FullName} :: {Signature(member)}");
                }
            }
        }

        lines.Sort(StringComparer.Ordinal);
        return string.Join("\n", lines) + "\n";
    }

    private static string Kind(Type t) =>
        t.IsEnum ? "enum" : t.IsInterface ? "interface" : t.IsValueType ? "struct" : t.IsAbstract && t.IsSealed ? "static class" :
        t.IsAbstract ? "abstract class" : t.IsSealed ? "sealed class" : "class";

    private static string BaseList(Type t)
    {
        var parts = new List<string>();
        if (t.BaseType is { } b && b != typeof(object) && b != typeof(ValueType) && b != typeof(Enum))
        {
            parts.Add(b.ToString());
        }

        parts.AddRange(t.GetInterfaces().Select(i => i.ToString()).Order(StringComparer.Ordinal));
        return parts.Count == 0 ? "" : " : " + string.Join(", ", parts);
    }

    private static bool Visible(MemberInfo m) => m switch
    {
        MethodBase mb => mb.IsPublic || mb.IsFamily || mb.IsFamilyOrAssembly,
        FieldInfo f => f.IsPublic || f.IsFamily || f.IsFamilyOrAssembly,
        PropertyInfo p => (p.GetMethod is { } g && Visible(g)) || (p.SetMethod is { } s && Visible(s)),
        EventInfo e => e.AddMethod is { } a && Visible(a),
        Type nested => nested.IsNestedPublic || nested.IsNestedFamily,
        _ => false,
    };

    private static bool IsCompilerNoise(MemberInfo m) =>
        (m is MethodInfo mi && mi.IsSpecialName && (mi.Name.StartsWith("get_", StringComparison.Ordinal) || mi.Name.StartsWith("set_", StringComparison.Ordinal)
            || mi.Name.StartsWith("add_", StringComparison.Ordinal) || mi.Name.StartsWith("remove_", StringComparison.Ordinal)))
        || m.Name is "<Clone>$" or "EqualityContract" || (m is FieldInfo f && f.IsSpecialName);

    private static string Signature(MemberInfo m)
    {
        var sb = new StringBuilder();
        switch (m)
        {
            case ConstructorInfo c:
                sb.Append(c.IsStatic ? "static .ctor(" : ".ctor(").Append(Parameters(c)).Append(')');
                break;
            case MethodInfo mi:
                sb.Append(mi.IsStatic ? "static " : mi.IsAbstract ? "abstract " : mi.IsVirtual && mi.GetBaseDefinition() == mi && !mi.IsFinal ? "virtual " : "")
                  .Append(mi.ReturnType).Append(' ').Append(mi.Name);
                if (mi.IsGenericMethod)
                {
                    sb.Append('<').Append(string.Join(",", mi.GetGenericArguments().Select(a => a.Name))).Append('>');
                }

                sb.Append('(').Append(Parameters(mi)).Append(')');
                break;
            case PropertyInfo p:
                sb.Append(p.PropertyType).Append(' ').Append(p.Name).Append(" {")
                  .Append(p.GetMethod is { } g && Visible(g) ? " get;" : "")
                  .Append(p.SetMethod is { } s && Visible(s) ? (s.ReturnParameter.GetRequiredCustomModifiers().Any(t => t.Name == "IsExternalInit") ? " init;" : " set;") : "")
                  .Append(" }");
                break;
            case FieldInfo f:
                sb.Append(f.IsLiteral ? "const " : f.IsStatic ? "static " : "").Append(f.FieldType).Append(' ').Append(f.Name);
                if (f.IsLiteral)
                {
                    sb.Append(" = ").Append(Convert.ToString(f.GetRawConstantValue(), System.Globalization.CultureInfo.InvariantCulture));
                }

                break;
            case EventInfo e:
                sb.Append("event ").Append(e.EventHandlerType).Append(' ').Append(e.Name);
                break;
            case Type nested:
                sb.Append("nested ").Append(nested.Name);
                break;
        }

        return sb.ToString();
    }

    private static string Parameters(MethodBase m) =>
        string.Join(", ", m.GetParameters().Select(p =>
            (p.IsOut ? "out " : p.ParameterType.IsByRef ? (p.IsIn ? "in " : "ref ") : "") + p.ParameterType.ToString().TrimEnd('&') + " " + p.Name +
            (p.HasDefaultValue ? " = " + (Convert.ToString(p.DefaultValue, System.Globalization.CultureInfo.InvariantCulture) ?? "null") : "")));

    private static string RepositoryRoot()
    {
        var dir = new DirectoryInfo(AppContext.BaseDirectory);
        while (dir is not null && !File.Exists(Path.Combine(dir.FullName, "StreamForecast.sln")))
        {
            dir = dir.Parent;
        }

        return dir?.FullName ?? throw new InvalidOperationException("StreamForecast.sln not found above the test binaries.");
    }
}
